package model

import (
	"reflect"
	"sync"

	"spinpop/model/spin"
)

// A joint fit re-observes the bank at a dozen or more nuisance values a
// round, and about half of them leave the spin-down law alone (the
// spots, the detection, the color calibration, the binary share): every
// stored star would get the same period again. The law's period, the
// tidal lock and the turnover time are a good part of a re-observation's
// cost (three logarithms and two exponentials per star, with the
// logarithms of the period and of τ_c that the rest reads), so Bank keeps
// them, per star,
// for the few laws it saw last (lawMemo). What is kept is what the same
// calls return, so a re-observation reads the same numbers it would have
// worked out: templates do not depend on whether the memo was used
// (TestObserveLawMemoIdentical).

// maxLawMemos is how many laws' worth of spins a Bank keeps. A fit's round
// observes its centre, then side points of each parameter in turn: those
// of the law's coefficients and scatter are new laws each, those of the
// other parameters share the centre's law, which is made again (once)
// when the law's side points have pushed it out. 25 bytes a stored star
// each, and one spare set of storage.
const maxLawMemos = 3

// lawKey is what decides spinPeriod's answer for a stored star: the law
// (its coefficients, scatter and scale), the turnover time, and the tidal
// lock.
type lawKey struct {
	law                spin.Law
	turnover           spin.TurnoverTime
	lockFrac, lockMaxD float64
}

// keyOf returns p's law key, and whether it may be kept: a key is kept
// only when comparing it compares values. A law held by pointer (the
// torque law, made anew for every re-observation) or holding functions,
// slices or maps is worked out every time.
func keyOf(p *Population) (lawKey, bool) {
	k := lawKey{law: p.Law, turnover: p.Turnover, lockFrac: p.Binaries.TidalLockFraction, lockMaxD: p.Binaries.TidalLockMaxD}
	return k, byValue(reflect.ValueOf(k))
}

// byValue reports whether == on v compares values only: no pointers,
// functions, maps, channels or slices anywhere inside.
func byValue(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Pointer, reflect.UnsafePointer, reflect.Func, reflect.Map, reflect.Chan, reflect.Slice:
		return false
	case reflect.Interface:
		return v.IsNil() || byValue(v.Elem())
	case reflect.Struct:
		for i := range v.NumField() {
			if !byValue(v.Field(i)) {
				return false
			}
		}
	case reflect.Array:
		for i := range v.Len() {
			if !byValue(v.Index(i)) {
				return false
			}
		}
	}
	return true
}

// Flags of a memo's star.
const (
	memoKnown  uint8 = 1 << iota // the pass that made the memo reached the star
	memoOK                       // spinState.ok
	memoLocked                   // spinState.locked
	memoTauOK                    // spinState.tauOK
)

// memoStore is the per-star storage of a memo: the flags, and the
// period, its logarithm and that of τ_c (one record a star).
type memoStore struct {
	flags []uint8
	rec   []spinRecord
}

type spinRecord struct{ periodD, lnP, lnTau float64 }

func newMemoStore(n int) memoStore {
	return memoStore{flags: make([]uint8, n), rec: make([]spinRecord, n)}
}

// get returns star s's spin, and whether the memo has it.
func (m *memoStore) get(s int) (spinState, bool) {
	f := m.flags[s]
	if f&memoKnown == 0 {
		return spinState{}, false
	}
	r := &m.rec[s]
	return spinState{periodD: r.periodD, lnP: r.lnP, lnTau: r.lnTau,
		ok: f&memoOK != 0, locked: f&memoLocked != 0, tauOK: f&memoTauOK != 0}, true
}

// put keeps star s's spin.
func (m *memoStore) put(s int, sp spinState) {
	f := memoKnown
	if sp.ok {
		f |= memoOK
	}
	if sp.locked {
		f |= memoLocked
	}
	if sp.tauOK {
		f |= memoTauOK
	}
	m.rec[s], m.flags[s] = spinRecord{sp.periodD, sp.lnP, sp.lnTau}, f
}

// memo is one key's per-star storage S (a memoStore or a seenStore).
type memo[K comparable, S any] struct {
	key K
	st  S
	// users counts the Observe calls reading it; dropped is set when it
	// left the list, so that the last reader hands its storage back.
	users   int
	dropped bool
}

// memoList is a Bank's memo of one kind: the latest keys, most recent
// last, at most max of them. A memo is made by one Observe (which alone
// writes it) and shared when that Observe has finished; others only read
// it. One dropped memo's storage is kept to be used again (spare): fresh
// storage for every law a fit tries costs more in page faults than the
// memo saves.
type memoList[K comparable, S any] struct {
	mu      sync.Mutex
	max     int
	entries []*memo[K, S]
	spare   *S
	// alloc makes storage for n stars; stars returns how many storage
	// holds; forget marks every star of it unknown.
	alloc  func(n int) S
	stars  func(st *S) int
	forget func(st *S)
}

// lawMemos is the memo of the stars' spins (spinPeriod) by law.
type lawMemos = memoList[lawKey, memoStore]

// lawMemo is every stored star's spin under one law.
type lawMemo = memo[lawKey, memoStore]

func newLawMemos() *lawMemos {
	return &lawMemos{max: maxLawMemos, alloc: newMemoStore,
		stars: func(st *memoStore) int { return len(st.flags) }, forget: func(st *memoStore) { clear(st.flags) }}
}

// size returns how many memos the list keeps.
func (m *memoList[K, S]) size() int {
	if m == nil {
		return 0
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	return len(m.entries)
}

// find returns the memo of key for reading, nil if none; the caller
// calls release when done with it.
func (m *memoList[K, S]) find(key K) *memo[K, S] {
	if m == nil {
		return nil
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	for i, e := range m.entries {
		if e.key == key {
			m.entries = append(append(m.entries[:i:i], m.entries[i+1:]...), e)
			e.users++
			return e
		}
	}
	return nil
}

// release ends a read of e that find began.
func (m *memoList[K, S]) release(e *memo[K, S]) {
	if m == nil || e == nil {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	e.users--
	if e.dropped && e.users == 0 {
		m.keepSpare(&e.st)
	}
}

// keepSpare keeps st's storage for the next memo if there is no spare
// yet, and lets it go otherwise. m.mu is held.
func (m *memoList[K, S]) keepSpare(st *S) {
	if m.spare == nil {
		kept := *st
		m.spare = &kept
	}
	var zero S
	*st = zero
}

// newMemo returns a memo of key for n stars to fill, on the spare
// storage when there is one (every star unknown).
func (m *memoList[K, S]) newMemo(key K, n int) *memo[K, S] {
	m.mu.Lock()
	sp := m.spare
	if sp != nil && m.stars(sp) == n {
		m.spare = nil
	} else {
		sp = nil
	}
	m.mu.Unlock()
	e := &memo[K, S]{key: key}
	if sp == nil {
		e.st = m.alloc(n)
	} else {
		e.st = *sp
		m.forget(&e.st) // every star unknown; the rest is written before it is read
	}
	return e
}

// add keeps e, dropping the least recently used beyond max.
func (m *memoList[K, S]) add(e *memo[K, S]) {
	if m == nil {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	for _, o := range m.entries {
		if o.key == e.key {
			// Made by a concurrent Observe: the same numbers.
			m.keepSpare(&e.st)
			return
		}
	}
	m.entries = append(m.entries, e)
	for len(m.entries) > m.max {
		old := m.entries[0]
		m.entries = append(m.entries[:0:0], m.entries[1:]...)
		old.dropped = true
		if old.users == 0 {
			m.keepSpare(&old.st)
		}
	}
}
