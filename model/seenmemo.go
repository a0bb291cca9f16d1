package model

import (
	"reflect"

	"spinpop/model/spots"
)

// A fit's side points of the color calibration and of the binary share
// (and the pattern moves that change only those) leave every stored
// star's period, spot amplitude and detection probability where they
// were: only which color column a star falls in, whether it passes the
// color cuts, and its weight change. Bank keeps, per star, what
// observeRotation returned before the search completeness's factor for
// the latest two combinations of law, spots and detection (seenMemo), so
// that such a re-observation skips the spin-down law, the spot draw and
// the detection altogether, and only applies the search's factor again. As with
// the law memo, what is kept is what the same calls return, so templates
// do not depend on whether it was used (TestObserveSeenMemoIdentical).

// maxSeenMemos is how many combinations a Bank keeps: a round's color
// side points come one after the other, so two suffice; 49 bytes a
// stored star each, and one spare set of storage.
const maxSeenMemos = 2

// seenKey is what decides observeRotation's answer for a stored star,
// given its noise, before the search completeness's factor: the law's
// key, the spot model, the detection (its noise model decides the noise),
// and whether the search completeness is on and reads τ_c (which decides
// whether τ_c/τ_c☉ is worked out). The factor itself is applied again on
// every read (searchFactor), so the search's nodes, which a fit moves
// every round, are not part of the key, and the pass that makes a
// centre's templates with their derivatives (every node at 1) serves the
// side points that follow it.
type seenKey struct {
	law             lawKey
	hasSpots        bool
	spots           spots.AmplitudeModel
	detect          spots.Detection
	searchOn, tauOn bool
}

// seenKeyOf returns p's seen key, and whether it may be kept (as keyOf).
func seenKeyOf(p *Population) (seenKey, bool) {
	lk, ok := keyOf(p)
	if !ok {
		return seenKey{}, false
	}
	s := p.Survey.Search
	k := seenKey{law: lk, detect: p.Survey.Detect, searchOn: s.Enabled(), tauOn: s.NeedsTurnover()}
	if p.Spots != nil {
		k.hasSpots, k.spots = true, *p.Spots
	}
	return k, byValue(reflect.ValueOf(k))
}

// Flags of a seen memo's star.
const (
	seenKnown uint8 = 1 << iota // the pass that made the memo reached the star
	seenOK                      // rotation.ok
)

// seenStore is the per-star storage of a seen memo: the flags, and the
// parts of a rotation that binning reads but the search's factor (with
// ln Ro and the amplitude's deviate for the derivatives in the spots'
// parameters), one record a star.
type seenStore struct {
	flags []uint8
	rec   []seenRecord
}

type seenRecord struct{ preSearch, lnTauRatio, periodD, lnP, lnRo, spotZ float64 }

func newSeenStore(n int) seenStore {
	return seenStore{flags: make([]uint8, n), rec: make([]seenRecord, n)}
}

// get returns star s's rotation (the fields binning reads; prob without
// the search's factor, which the caller applies), and whether the memo
// has it.
func (m *seenStore) get(s int) (rotation, bool) {
	f := m.flags[s]
	if f&seenKnown == 0 {
		return rotation{}, false
	}
	r := &m.rec[s]
	return rotation{periodD: r.periodD, lnP: r.lnP, lnRo: r.lnRo, spotZ: r.spotZ, prob: r.preSearch, preSearch: r.preSearch,
		lnTauRatio: r.lnTauRatio, ok: f&seenOK != 0}, true
}

// put keeps star s's rotation.
func (m *seenStore) put(s int, r rotation) {
	f := seenKnown
	if r.ok {
		f |= seenOK
	}
	m.rec[s] = seenRecord{preSearch: r.preSearch, lnTauRatio: r.lnTauRatio, periodD: r.periodD, lnP: r.lnP, lnRo: r.lnRo, spotZ: r.spotZ}
	m.flags[s] = f
}

// seenMemos is the memo of the stars' rotations by seen key.
type seenMemos = memoList[seenKey, seenStore]

// seenMemo is every stored star's rotation under one seen key.
type seenMemo = memo[seenKey, seenStore]

func newSeenMemos() *seenMemos {
	return &seenMemos{max: maxSeenMemos, alloc: newSeenStore,
		stars: func(st *seenStore) int { return len(st.flags) }, forget: func(st *seenStore) { clear(st.flags) }}
}
