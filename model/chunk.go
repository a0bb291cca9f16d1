package model

import (
	"unsafe"

	"spinpop/disk"
)

// Flag bits record what happened to a star on its way through the survey,
// so a catalog row says why a star was or was not kept. The catalog's
// steps are tested in order (magnitude limits, color range, main-sequence
// band, then rotation and its detection) and a star is not tested beyond
// the first photometric step it fails: FlagOnMainSeq is set only for stars
// inside the magnitude and color ranges, and FlagOutsideLaw, FlagTidalLock,
// FlagDetected, FlagInPeriodWindow and the alias flags only for stars that
// pass all three photometric steps. The other flags are always set when
// they apply.
type Flag uint16

const (
	FlagBinary         Flag = 1 << iota // has an unresolved companion
	FlagEvolved                         // past its main-sequence lifetime, brightened
	FlagGone                            // evolved beyond a dwarf sample (giant or remnant)
	FlagOutsideLaw                      // outside the spin-down law's calibrated range: no period
	FlagTidalLock                       // close binary, period set by the orbit
	FlagInMagRange                      // apparent magnitude within the survey limits
	FlagInColorRange                    // observed color inside the catalog cut
	FlagOnMainSeq                       // inside the band around the single-star main sequence
	FlagDetected                        // the survey measured a period
	FlagInPeriodWindow                  // measured period inside the catalog's period window
	FlagHalfAlias                       // measured period is half the true one
	FlagDoubleAlias                     // measured period is twice the true one
)

// Selected reports whether a star ends in the observed catalog: every
// selection step passed.
func (f Flag) Selected() bool {
	const all = FlagInMagRange | FlagInColorRange | FlagOnMainSeq | FlagDetected | FlagInPeriodWindow
	return f&all == all && f&(FlagGone|FlagOutsideLaw) == 0
}

// Chunk holds a block of stars in struct-of-arrays form: one slice per
// quantity, all of length N. Workers fill chunks in place; the arrays are
// reused from chunk to chunk, so the hot path allocates nothing.
//
// Most generated stars fail the survey's magnitude limits, so rotation is
// worked out only for the stars a catalog could hold, those that pass the
// magnitude, color and main-sequence cuts (see Flag). For the others
// LDeg, BDeg, PeriodD, MeasPeriodD, Rossby, AmpPpm and NoisePpm are NaN
// and DetectProb is 0; every other column is filled for every star (BV and
// ObsBV of stars outside the magnitude limits without the color scatter).
type Chunk struct {
	Index int // position in the run; fixes the chunk's random stream
	N     int

	// StarID numbers every star of the run from 1 in chunk order
	// (Index·chunk size + i + 1), set by RunChunks: the same star has the
	// same number in the catalog of a run and in a mock catalog of the same
	// scenario and seed, whatever the thread count or the split of the run.
	// Stored as float64 like every column: exact up to 2⁵³, far above the
	// largest run a scenario allows.
	StarID []float64

	AgeBin        []int32
	AgeGyr        []float64
	MassMsun      []float64
	CompanionMsun []float64 // 0 when single
	FeH           []float64
	TeffK         []float64
	BV            []float64 // intrinsic system color (companion, [Fe/H] shift and, inside the magnitude limits, color scatter included)
	VKs           []float64
	AbsMagV       []float64 // system absolute V (companion and evolution included)
	AbsMagBand    []float64 // in the survey band
	LDeg          []float64
	BDeg          []float64
	DistPc        []float64
	ZPc           []float64
	AV            []float64 // extinction in V
	AppMag        []float64 // apparent magnitude in the survey band
	ObsBV         []float64 // reddened color as a catalog would list it
	ObsAbsMag     []float64 // m - 5 log10(d/10 pc): absolute magnitude as derived from parallax
	PeriodD       []float64 // true rotation period (NaN outside the law's range)
	MeasPeriodD   []float64 // period the survey reports (NaN if not detected)
	Rossby        []float64
	AmpPpm        []float64 // spot modulation amplitude
	NoisePpm      []float64 // survey noise per cadence at the star's magnitude
	DetectProb    []float64
	Flags         []Flag

	// dir holds each star's direction as the joint sampler drew it, until
	// star turns it into LDeg and BDeg (only for stars that pass the
	// photometric catalog cuts).
	dir []disk.Direction
}

// NewChunk allocates a chunk for up to n stars.
func NewChunk(n int) *Chunk {
	c := &Chunk{}
	c.grow(n)
	return c
}

func (c *Chunk) grow(n int) {
	f := func(s *[]float64) {
		if cap(*s) < n {
			*s = make([]float64, n)
		}
		*s = (*s)[:n]
	}
	for _, col := range storedColumns {
		f(col(c))
	}
	if cap(c.AgeBin) < n {
		c.AgeBin = make([]int32, n)
	}
	c.AgeBin = c.AgeBin[:n]
	if cap(c.dir) < n {
		c.dir = make([]disk.Direction, n)
	}
	c.dir = c.dir[:n]
	if cap(c.Flags) < n {
		c.Flags = make([]Flag, n)
	}
	c.Flags = c.Flags[:n]
	c.N = n
}

// ChunkBytesPerStar is the memory a chunk holds per star: one float64 per
// stored column, the age bin, the flags and the drawn direction. A run
// holds two chunks per worker (RunChunks), so its chunk memory is
// 2 × workers × chunk size × this.
func ChunkBytesPerStar() int {
	return 8*len(storedColumns) + int(unsafe.Sizeof(int32(0))+unsafe.Sizeof(Flag(0))+unsafe.Sizeof(disk.Direction{}))
}
