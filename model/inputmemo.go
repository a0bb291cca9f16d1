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
// for the latest law C, turnover time and tidal lock (inputMemo),
// so that such a side point costs a sum of products and three
// exponentials a star. Every re-observation under a law with a log form
// goes through the same inputs, kept or worked out afresh, so templates do
// not depend on whether the memo was used (TestObserveInputMemoIdentical).

// maxInputMemos is how many input sets a Bank keeps: the law's C is
// seldom fitted, so one suffices; 65 bytes a stored star, and one spare
// set of storage.
const maxInputMemos = 1

// inputKey is what decides a stored star's inputs: the law's C and stall
// (which Terms reads), the turnover time, and the tidal lock. Whether the law
// draws a scatter deviate decides where the tidal-lock draws fall in the
// star's stream; both outcomes are kept, so that a fit whose scatter sits
// at 0 (a law without scatter, whose side point has some) reads one memo.
type inputKey struct {
	c                  float64
	stall              spin.StallOptions // moves the effective age Terms reads
	turnover           spin.TurnoverTime
	lockFrac, lockMaxD float64
}

func inputKeyOf(rp *rotationPlan) inputKey {
	p := rp.p
	return inputKey{c: rp.law.C(), stall: rp.law.Stall(), turnover: p.Turnover, lockFrac: p.Binaries.TidalLockFraction, lockMaxD: p.Binaries.TidalLockMaxD}
}

// starInputs is one stored star's inputs. The tidal lock's outcome is
// kept for a law that draws no deviate (index 0) and for one that draws
// one first (index 1).
type starInputs struct {
	l1, l2 float64    // ln(B−V − C), ln(1000 t)
	zLaw   float64    // the first normal deviate of the star's law stream: a scattered law's
	lnLock [2]float64 // ln of the locked period, when locked
	lnTau  float64    // ln τ_c, when tauOK
	zSpot  float64    // the spot amplitude's deviate
	locked [2]bool
	tauOK  bool
}

// inputStore is the per-star storage of an input memo: whether the star
// is known, and its inputs (one record a star, read together).
type inputStore struct {
	known []bool
	rec   []starInputs
}

func newInputStore(n int) inputStore {
	return inputStore{known: make([]bool, n), rec: make([]starInputs, n)}
}

func (m *inputStore) get(s int) (starInputs, bool) {
	if !m.known[s] {
		return starInputs{}, false
	}
	return m.rec[s], true
}

func (m *inputStore) put(s int, in starInputs) { m.rec[s], m.known[s] = in, true }

// inputMemos is the memo of the stars' inputs by input key.
type inputMemos = memoList[inputKey, inputStore]

// inputMemo is every stored star's inputs under one input key.
type inputMemo = memo[inputKey, inputStore]

func newInputMemos() *inputMemos {
	return &inputMemos{max: maxInputMemos, alloc: newInputStore,
		stars: func(st *inputStore) int { return len(st.known) }, forget: func(st *inputStore) { clear(st.known) }}
}

// drawInputs works out star s's inputs under the plan's law (which has a
// log form), drawing from the star's own streams exactly what spinPeriod
// and observeRotation draw: from stream 1 the tidal-lock uniforms (for a
// law without scatter), or the law's deviate and then those uniforms (for
// one with), from stream 2 the spot deviate first.
func (rp *rotationPlan) drawInputs(st spin.Star, comp float64, seed uint64, lawSrc, spotSrc *rand.PCG, lawR, spotR *rand.Rand) starInputs {
	p := rp.p
	var in starInputs
	in.l1, in.l2 = rp.law.Terms(st)
	lockable := comp > 0 && p.Binaries.TidalLockFraction > 0
	lock := func(i int) {
		in.lnLock[i] = math.NaN()
		if lockable && lawR.Float64() < p.Binaries.TidalLockFraction {
			in.lnLock[i] = lawR.Float64() * rp.lnLockMaxD
			in.locked[i] = true
		}
	}
	lawSrc.Seed(seed, 1)
	lock(0)
	if lockable {
		lawSrc.Seed(seed, 1)
	}
	in.zLaw = lawR.NormFloat64()
	lock(1)
	tau, ok := p.Turnover.Days(st)
	in.lnTau, in.tauOK = math.NaN(), ok
	if ok {
		in.lnTau = math.Log(tau)
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
	sp.periodD = math.NaN() // the law has a log form: ln P is the period
	i := 0                  // where the lock draws fall: first in the stream, or after the law's deviate
	if rp.law.Draws() {
		i = 1
	}
	if in.locked[i] {
		sp.lnP = in.lnLock[i]
		sp.ok = true
		sp.locked = true
	}
	if !sp.ok {
		return sp
	}
	sp.tauOK, sp.lnTau = in.tauOK, in.lnTau
	return sp
}
