package othermodel

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

// Star is one catalog row: the measured columns as written (rounded to
// the file's precision) and the truth kept for diagnostics.
type Star struct {
	PeriodD, BV, VMag, ParallaxMas, RADeg, DecDeg float64 // as written
	AgeGyr, MassMsun, DistPc, ZPc, LDeg, BDeg     float64 // truth
	TruePeriodD                                   float64
}

// Tally counts what the generator drew, for diagnostics.
type Tally struct {
	Tries    int // (age, position) proposals
	Placed   int // accepted by the disk density
	Catalog  int // stars written
	Evolved  int // removed: older than their main-sequence lifetime
	Detected int // periods detected (before the catalog cuts on them)
}

// maxTries bounds the loop so that a configuration whose cuts let nothing
// through fails instead of running forever.
const maxTries = 2_000_000_000

// Generate draws stars until cfg.Stars pass every cut. Same (cfg, seed),
// same stars.
func Generate(cfg Config, seed uint64) ([]Star, Tally, error) {
	var tally Tally
	if err := cfg.Validate(); err != nil {
		return nil, tally, err
	}
	r := rand.New(rand.NewPCG(seed, 0x6f746865726d6f64)) // second word: "othermod"
	sv := cfg.Survey
	field := newCone(sv.LDeg, sv.BDeg, sv.RadiusDeg)
	r0Pc, zSun := cfg.SunRadiusKpc*1000, cfg.SunHeightPc
	rdPc := cfg.ScaleLengthKpc * 1000
	// The density bound: radial factor at the nearest possible radius, and the
	// vertical factor h0/h(τ)·exp(−|z|/h) ≤ 1.
	radialMax := math.Exp(sv.DistMaxPc / rdPc)
	scaleHeight := func(ageGyr float64) float64 {
		return cfg.ScaleHeight0Pc * math.Pow(1+ageGyr/cfg.ScaleHeightTau1Gyr, cfg.ScaleHeightBeta)
	}
	// Truncated power-law IMF by its inverse CDF.
	g := 1 - cfg.IMFSlope
	mLo, mHi := math.Pow(cfg.MassMinMsun, g), math.Pow(cfg.MassMaxMsun, g)

	stars := make([]Star, 0, cfg.Stars)
	for len(stars) < cfg.Stars {
		if tally.Tries++; tally.Tries > maxTries {
			return nil, tally, fmt.Errorf("othermodel: %d stars after %d tries; the cuts let almost nothing through", len(stars), maxTries)
		}
		// Age and place together, by rejection from the cone volume: the
		// density of stars of age τ is SFR(τ) · exp(−(R−R0)/Rd) · exp(−|z|/h)/(2h).
		age := cfg.History.SampleAgeGyr(r)
		u := field.draw(r)
		dist := sv.DistMaxPc * math.Cbrt(r.Float64())
		rPc, z := math.Hypot(r0Pc-dist*u[0], dist*u[1]), zSun+dist*u[2]
		h := scaleHeight(age)
		w := cfg.ScaleHeight0Pc / h * math.Exp(-(rPc-r0Pc)/rdPc-math.Abs(z)/h)
		if cfg.Vertical != nil {
			w = math.Exp(-(rPc-r0Pc)/rdPc) * cfg.Vertical.Accept(age, z)
		}
		if r.Float64()*radialMax >= w {
			continue
		}
		tally.Placed++

		m := math.Pow(mLo+r.Float64()*(mHi-mLo), 1/g)
		if age > cfg.lifetimeGyr(m) {
			tally.Evolved++
			continue
		}
		d, ok := cfg.dwarf(m)
		if !ok {
			continue
		}
		av := cfg.AVPerKpc * dist / 1000
		vMag := round(d.AbsMagV+5*math.Log10(dist/10)+av+cfg.MagErrMag*r.NormFloat64(), 1e4)
		bv := round(d.BV+av/cfg.RV+cfg.ColorErrMag*r.NormFloat64(), 1e4)
		if vMag < sv.VMinMag || vMag > sv.VMaxMag || bv < sv.BVMinMag || bv > sv.BVMaxMag {
			continue
		}
		lawAge := age
		if cfg.Stall != nil {
			lawAge = cfg.Stall.LawAgeGyr(d.BV, age)
		}
		p, ok := cfg.Gyro.PeriodD(d.BV, lawAge*1000)
		if !ok {
			continue // outside the law: no period, so no catalog entry
		}
		p *= math.Pow(10, cfg.PeriodScatterDex*r.NormFloat64())
		if r.Float64() >= cfg.Detection.Efficiency(p, bv, vMag) {
			continue
		}
		tally.Detected++
		meas := p * (1 + cfg.PeriodErrRel*r.NormFloat64())
		if r.Float64() < cfg.HalfAliasProb {
			meas /= 2
		}
		meas = round(meas, 1e5)
		if meas < sv.PeriodMinD || meas > sv.PeriodMaxD {
			continue
		}
		plx := round(1000/dist+cfg.ParallaxErrMas*r.NormFloat64(), 1e5)
		if plx <= 0 {
			continue // a catalog with a usable distance needs a positive parallax
		}
		l, b := angles(u)
		ra, dec := GalacticToICRS(l, b)
		stars = append(stars, Star{
			PeriodD: meas, BV: bv, VMag: vMag, ParallaxMas: plx,
			RADeg: round(ra, 1e6), DecDeg: round(dec, 1e6),
			AgeGyr: age, MassMsun: m, DistPc: dist, ZPc: z, LDeg: l, BDeg: b, TruePeriodD: p,
		})
	}
	tally.Catalog = len(stars)
	return stars, tally, nil
}

// lifetimeGyr is the main-sequence lifetime by cfg's relations.
func (c Config) lifetimeGyr(massMsun float64) float64 {
	if c.Relations != nil {
		return c.Relations.LifetimeGyr(massMsun)
	}
	return MSLifetimeGyr(massMsun)
}

// dwarf is the intrinsic B−V and M_V by cfg's relations.
func (c Config) dwarf(massMsun float64) (Dwarf, bool) {
	if c.Relations != nil {
		bv, mv, ok := c.Relations.Dwarf(massMsun)
		return Dwarf{BV: bv, AbsMagV: mv}, ok
	}
	return DwarfOfMass(massMsun), true
}

// round rounds to 1/scale, so the cuts see exactly the values written.
func round(v, scale float64) float64 { return math.Round(v*scale) / scale }

// CatalogHeader is the CSV header: the measured columns the example
// scenario's [data.columns] maps, then truth columns the reader ignores.
const CatalogHeader = "star_id,prot_d,bv_mag,vmag,plx_mas,ra_deg,dec_deg,true_age_gyr,true_mass_msun,true_dist_pc,true_z_pc,true_period_d"

// WriteCatalog generates a catalog with cfg and seed and writes it to path
// as CSV (under a temporary name, then renamed; an existing file is an
// error, never overwritten).
func WriteCatalog(path string, cfg Config, seed uint64) (Tally, error) {
	if _, err := os.Stat(path); err == nil {
		return Tally{}, fmt.Errorf("othermodel: %s exists; choose a new file name", path)
	}
	stars, tally, err := Generate(cfg, seed)
	if err != nil {
		return tally, err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), ".othermodel-*.csv")
	if err != nil {
		return tally, fmt.Errorf("othermodel: cannot write beside %s: %w", path, err)
	}
	defer os.Remove(tmp.Name()) // a no-op after the rename
	w := bufio.NewWriter(tmp)
	fmt.Fprintf(w, "# invented rotation catalog from the independent test model (internal/othermodel), seed %d\n", seed)
	fmt.Fprintf(w, "# history: max age %g Gyr, ramp slope %g, burst %s; law %s, stall %s, scatter %g dex\n",
		cfg.History.MaxAgeGyr, cfg.History.RampSlope, describeBurst(cfg.History.Burst), cfg.Gyro.Name, describeStall(cfg.Stall), cfg.PeriodScatterDex)
	if cfg.Relations != nil {
		fmt.Fprintf(w, "# relations: %s (not the model's own)\n", cfg.Relations.Name)
	}
	if cfg.Vertical != nil {
		fmt.Fprintf(w, "# vertical structure: %s (not the model's own)\n", cfg.Vertical.Name)
	}
	fmt.Fprintf(w, "# vmag includes extinction; bv_mag is reddened; true_* columns are diagnostics\n%s\n", CatalogHeader)
	f := func(v float64, prec int) string { return strconv.FormatFloat(v, 'f', prec, 64) }
	for i, s := range stars {
		fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", i+1,
			f(s.PeriodD, 5), f(s.BV, 4), f(s.VMag, 4), f(s.ParallaxMas, 5), f(s.RADeg, 6), f(s.DecDeg, 6),
			f(s.AgeGyr, 5), f(s.MassMsun, 4), f(s.DistPc, 2), f(s.ZPc, 2), f(s.TruePeriodD, 5))
	}
	if err := w.Flush(); err != nil {
		tmp.Close()
		return tally, fmt.Errorf("othermodel: writing %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return tally, fmt.Errorf("othermodel: writing %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return tally, fmt.Errorf("othermodel: writing %s: %w", path, err)
	}
	return tally, nil
}

func describeStall(s *Stall) string {
	if s == nil {
		return "none"
	}
	return fmt.Sprintf("%g Gyr from %g Gyr, full for B−V %g–%g, taper %g mag", s.DurationGyr, s.StartGyr, s.FullMinBV, s.FullMaxBV, s.TaperMag)
}

func describeBurst(b *Box) string {
	if b == nil {
		return "none"
	}
	return fmt.Sprintf("box %g–%g Gyr holding %g of the mass", b.StartGyr, b.EndGyr, b.Fraction)
}
