package model

import (
	"math"
	"math/rand/v2"

	"spinpop/model/spin"
)

// A fit's side points in the law's coefficients and scatter are new laws,
// so the law memo cannot serve them, yet most of what a stored star's
// rotation costs under a new empirical law does not depend on the law's
// coefficients: the logarithms ln(B−V − C) and ln(1000 t) that they
// multiply, the law's scatter deviate and the tidal-lock draws (taken from
// the star's own stream in an order no coefficient changes), τ_c and its
// logarithm, and the spot amplitude's deviate. Bank keeps these per star
// for the latest law C, scatter, turnover time and tidal lock (inputMemo),
// so that such a side point costs a sum of products and three
// exponentials a star. Every re-observation under a law with a log form
// goes through the same inputs, kept or worked out afresh, so templates do
// not depend on whether the memo was used (TestObserveInputMemoIdentical).

// maxInputMemos is how many input sets a Bank keeps: the law's C is
// seldom fitted, so one suffices; 57 bytes a stored star, and one spare
// set of storage.
const maxInputMemos = 1

// inputKey is what decides a stored star's inputs: the law's C (which
// Terms reads) and whether it draws a scatter deviate (which decides
// where the tidal-lock draws fall in the stream), the turnover time, and
// the tidal lock.
type inputKey struct {
	c                  float64
	draws              bool
	turnover           spin.TurnoverTime
	lockFrac, lockMaxD float64
}

func inputKeyOf(rp *rotationPlan) inputKey {
	p := rp.p
	return inputKey{c: rp.law.C(), draws: rp.law.Draws(), turnover: p.Turnover, lockFrac: p.Binaries.TidalLockFraction, lockMaxD: p.Binaries.TidalLockMaxD}
}

// starInputs is one stored star's inputs.
type starInputs struct {
	l1, l2     float64 // ln(B−V − C), ln(1000 t)
	zLaw       float64 // the law's scatter deviate (0 when it draws none)
	lnLock     float64 // ln of the locked period, when locked
	tau, lnTau float64 // τ_c and its ln, when tauOK
	zSpot      float64 // the spot amplitude's deviate
	locked     bool
	tauOK      bool
}

// Flags of an input memo's star.
const (
	inputKnown uint8 = 1 << iota
	inputLocked
	inputTauOK
)

// inputStore is the per-star storage of an input memo.
type inputStore struct {
	l1, l2, zLaw, lnLock, tau, lnTau, zSpot []float64
	flags                                   []uint8
}

func newInputStore(n int) inputStore {
	return inputStore{l1: make([]float64, n), l2: make([]float64, n), zLaw: make([]float64, n), lnLock: make([]float64, n),
		tau: make([]float64, n), lnTau: make([]float64, n), zSpot: make([]float64, n), flags: make([]uint8, n)}
}

func (m *inputStore) get(s int) (starInputs, bool) {
	f := m.flags[s]
	if f&inputKnown == 0 {
		return starInputs{}, false
	}
	return starInputs{l1: m.l1[s], l2: m.l2[s], zLaw: m.zLaw[s], lnLock: m.lnLock[s], tau: m.tau[s], lnTau: m.lnTau[s], zSpot: m.zSpot[s],
		locked: f&inputLocked != 0, tauOK: f&inputTauOK != 0}, true
}

func (m *inputStore) put(s int, in starInputs) {
	f := inputKnown
	if in.locked {
		f |= inputLocked
	}
	if in.tauOK {
		f |= inputTauOK
	}
	m.l1[s], m.l2[s], m.zLaw[s], m.lnLock[s], m.tau[s], m.lnTau[s], m.zSpot[s], m.flags[s] = in.l1, in.l2, in.zLaw, in.lnLock, in.tau, in.lnTau, in.zSpot, f
}

// inputMemos is the memo of the stars' inputs by input key.
type inputMemos = memoList[inputKey, inputStore]

// inputMemo is every stored star's inputs under one input key.
type inputMemo = memo[inputKey, inputStore]

func newInputMemos() *inputMemos {
	return &inputMemos{max: maxInputMemos, alloc: newInputStore,
		stars: func(st *inputStore) int { return len(st.flags) }, forget: func(st *inputStore) { clear(st.flags) }}
}

// drawInputs works out star s's inputs under the plan's law (which has a
// log form), drawing from the star's own streams exactly what spinPeriod
// and observeRotation draw: the law's deviate and the tidal-lock uniforms
// from stream 1, the spot deviate first from stream 2.
func (rp *rotationPlan) drawInputs(st spin.Star, comp float64, seed uint64, lawSrc, spotSrc *rand.PCG, lawR, spotR *rand.Rand) starInputs {
	p := rp.p
	lawSrc.Seed(seed, 1)
	var in starInputs
	if rp.law.Draws() {
		in.zLaw = lawR.NormFloat64()
	}
	in.l1, in.l2 = rp.law.Terms(st)
	in.lnLock = math.NaN()
	if comp > 0 && p.Binaries.TidalLockFraction > 0 && lawR.Float64() < p.Binaries.TidalLockFraction {
		in.lnLock = lawR.Float64() * rp.lnLockMaxD
		in.locked = true
	}
	in.tau, in.tauOK = p.Turnover.Days(st)
	in.lnTau = math.NaN()
	if in.tauOK {
		in.lnTau = math.Log(in.tau)
	}
	spotSrc.Seed(seed, 2)
	in.zSpot = spotR.NormFloat64()
	return in
}

// spinFromInputs is spinPeriod for star st whose inputs are in: the same numbers by the same arithmetic.
func (rp *rotationPlan) spinFromInputs(st spin.Star, in *starInputs) spinState {
	var sp spinState
	sp.lnP, sp.ok = math.NaN(), rp.law.InRange(st)
	if sp.ok {
		sp.lnP = rp.law.FromTerms(in.l1, in.l2, in.zLaw)
	}
	sp.periodD = math.Exp(sp.lnP)
	if in.locked {
		sp.lnP = in.lnLock
		sp.periodD = math.Exp(sp.lnP)
		sp.ok = true
		sp.locked = true
	}
	if !sp.ok {
		return sp
	}
	sp.tauD, sp.tauOK, sp.lnTau = in.tau, in.tauOK, in.lnTau
	return sp
}
