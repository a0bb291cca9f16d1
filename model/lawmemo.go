package model

import (
	"math"
	"reflect"
	"sync"

	"spinpop/model/spin"
)

// A joint fit re-observes the bank at a dozen or more nuisance values a
// round, and most of them leave the spin-down law alone (the spots, the
// detection, the search, the color calibration, the binary share): every
// stored star would get the same period again. The law's period, the
// tidal lock and the turnover time are about a third of a re-observation's
// cost (two logarithms and two exponentials per star, and the logarithm
// that places the period on the fine grid), so Bank keeps them, per star,
// for the few laws it saw last (lawMemo). What is kept is what the same
// calls return, so a re-observation reads the same numbers it would have
// worked out: templates do not depend on whether the memo was used
// (TestObserveLawMemoIdentical).

// maxLawMemos is how many laws' worth of periods a Bank keeps: a fit's
// round observes the centre, two side points for each free coefficient
// of the law and its scatter (misses), then the side points of every other
// parameter (hits on the centre's law). About 32 bytes a stored star each.
const maxLawMemos = 3

// lawKey is what decides spinPeriod's answer for a stored star: the law
// (its coefficients, scatter and scale), the turnover time, and the tidal
// lock. Only comparable keys are kept (a law holding functions is
// worked out every time).
type lawKey struct {
	law                spin.Law
	turnover           spin.TurnoverTime
	lockFrac, lockMaxD float64
}

func keyOf(p *Population) (lawKey, bool) {
	k := lawKey{law: p.Law, turnover: p.Turnover, lockFrac: p.Binaries.TidalLockFraction, lockMaxD: p.Binaries.TidalLockMaxD}
	return k, reflect.ValueOf(k).Comparable()
}

// memoStar is one stored star's spin under a law, and log10 of its
// period (the fine grid's coordinate; NaN until a pass needs it); known
// is false for a star the pass that made the memo did not reach (outside
// that pass's cuts).
type memoStar struct {
	spin   spinState
	log10P float64
	known  bool
}

// lawMemo is every stored star's spin under one law.
type lawMemo struct {
	key   lawKey
	stars []memoStar
	// users counts the Observe calls reading it; dropped is set when it
	// left the list, so that the last reader hands its storage back.
	users   int
	dropped bool
}

// lawMemos is a Bank's memo: the latest laws, most recent last. A memo is
// made by one Observe (which alone writes it) and shared when that
// Observe has finished; others only read it. The storage of dropped memos
// is used again (spare): a fresh 40 MB for every law the fit tries costs
// more in page faults than the memo saves.
type lawMemos struct {
	mu      sync.Mutex
	entries []*lawMemo
	spare   [][]memoStar
}

// find returns the memo of key for reading, nil if none; the caller
// calls release when done with it.
func (m *lawMemos) find(key lawKey) *lawMemo {
	if m == nil {
		return nil
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	for i, e := range m.entries {
		if e.key == key {
			// Most recent last: the centre's law stays while side points of
			// the law's own coefficients come and go.
			m.entries = append(append(m.entries[:i:i], m.entries[i+1:]...), e)
			e.users++
			return e
		}
	}
	return nil
}

// release ends a read of e that find began.
func (m *lawMemos) release(e *lawMemo) {
	if m == nil || e == nil {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	e.users--
	if e.dropped && e.users == 0 {
		m.spare = append(m.spare, e.stars)
		e.stars = nil
	}
}

// newMemo returns a memo of key for n stars to fill, on spare storage
// when there is some (every star unknown).
func (m *lawMemos) newMemo(key lawKey, n int) *lawMemo {
	m.mu.Lock()
	var stars []memoStar
	if k := len(m.spare); k > 0 && len(m.spare[k-1]) == n {
		stars, m.spare = m.spare[k-1], m.spare[:k-1]
	}
	m.mu.Unlock()
	if stars == nil {
		stars = make([]memoStar, n)
	} else {
		clear(stars)
	}
	return &lawMemo{key: key, stars: stars}
}

// add keeps e, dropping the least recently used beyond maxLawMemos.
func (m *lawMemos) add(e *lawMemo) {
	if m == nil {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	for _, o := range m.entries {
		if o.key == e.key {
			// Made by a concurrent Observe: the same numbers.
			m.spare = append(m.spare, e.stars)
			return
		}
	}
	m.entries = append(m.entries, e)
	for len(m.entries) > maxLawMemos {
		old := m.entries[0]
		m.entries = append(m.entries[:0:0], m.entries[1:]...)
		old.dropped = true
		if old.users == 0 {
			m.spare = append(m.spare, old.stars)
			old.stars = nil
		}
	}
}

// memoLog10 is log10 of a spin's period, as the fine grid reads it (NaN
// for a spin without one).
func memoLog10(sp spinState) float64 {
	if !sp.ok {
		return math.NaN()
	}
	return math.Log10(sp.periodD)
}
