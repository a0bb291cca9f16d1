package compare

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/catalog"
	"spinpop/fitstable"
	"spinpop/model"
)

// KeepStar makes the same decision as the model's selection flags, star by
// star, for every generated star within the magnitude limits that was
// either detected or cut by color or main-sequence band (the model works out
// no rotation for those, so they carry no period); so it does with dust
// and the band placed after the dust is taken out. Common practice, no
// source: data and model must be cut alike.
func TestKeepStarAgreesWithModelFlags(t *testing.T) {
	world := newTestWorld(t, piecewiseHistory(t, []float64{2, 1, 1, 1, 1, 1, 1, 1, 1}), tplEdges)
	bandCuts := map[string]int{}
	for _, setting := range []string{"no dust", "dust", "dust, dereddened band"} {
		pop := *world.pop
		pop.Cuts.HeightMaxPc = 150 // exercise the height cut too
		pop.Cuts.PeriodMinD, pop.Cuts.PeriodMaxD = 1, 40
		pop.Cuts.BVMin, pop.Cuts.BVMax = 0.6, 1.3
		if setting != "no dust" {
			// 1.5 mag/kpc, uniform: up to 0.9 mag at the cone's 600 pc.
			pop.Dust = func(dPc, _ float64) float64 { return 1.5 * dPc / 1000 }
			pop.Cuts.MSBandDereddened = setting == "dust, dereddened band"
		}
		require.NoError(t, pop.Prepare())
		c := model.NewChunk(60000)
		pop.Fill(c, model.ChunkStream(5, 0))
		checked, kept := 0, 0
		reasons := map[string]int{}
		for i := 0; i < c.N; i++ {
			f := c.Flags[i]
			photometric := model.FlagInColorRange | model.FlagOnMainSeq
			if f&model.FlagInMagRange == 0 || f&(model.FlagGone|model.FlagOutsideLaw) != 0 || (f&photometric == photometric && f&model.FlagDetected == 0) {
				continue
			}
			checked++
			ok, why := KeepStar(pop.Cuts, world.rel, c.ObsBV[i], c.ObsAbsMag[i], c.AV[i], c.MeasPeriodD[i], c.ZPc[i])
			require.Equal(t, f.Selected(), ok, "%s, star %d: flags %b, KeepStar says %v (%s)", setting, i, f, ok, why)
			if ok {
				kept++
			} else {
				reasons[why]++
			}
		}
		t.Logf("%s: %d stars checked, %d kept, removed by %v", setting, checked, kept, reasons)
		require.Greater(t, checked, 2000, setting)
		for _, r := range []string{CutColor, CutMainSequence, CutPeriodWindow, CutHeight} {
			assert.Positive(t, reasons[r], "%s: cut %s never exercised", setting, r)
		}
		bandCuts[setting] = reasons[CutMainSequence]
	}
	// Reddening moves a star along A_V/E(B−V) = 3.1, shallower than the
	// sequence over most of these colors, so the band as measured removes
	// reddened single stars the dereddened band keeps.
	assert.Greater(t, bandCuts["dust"], bandCuts["dust, dereddened band"])
}

func writeCatalog(t *testing.T, rows []string) (path, sha string) {
	dir := t.TempDir()
	path = filepath.Join(dir, "cat.csv")
	body := "period_d,b_v,abs_mag_v,z_pc\n" + strings.Join(rows, "\n") + "\n"
	require.NoError(t, os.WriteFile(path, []byte(body), 0o644))
	s := sha256.Sum256([]byte(body))
	return path, hex.EncodeToString(s[:])
}

func TestReadObservedCutsRejectsAndHash(t *testing.T) {
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	cuts := model.Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 0.4, MSBandFaintMag: 0.4, PeriodMinD: 0.5, PeriodMaxD: 100, HeightMaxPc: 600}
	ms := func(bv float64) float64 { m, ok := rel.AbsMagVAtBV(bv); require.True(t, ok); return m }
	rows := []string{
		fmt.Sprintf("12,0.8,%.4f,50", ms(0.8)),       // kept
		fmt.Sprintf("20,1.0,%.4f,-120", ms(1.0)+0.1), // kept (|z| used)
		fmt.Sprintf("12,0.3,%.4f,50", ms(0.8)),       // color
		fmt.Sprintf("12,0.8,%.4f,50", ms(0.8)-1.0),   // main sequence (too bright)
		fmt.Sprintf("150,0.8,%.4f,50", ms(0.8)),      // period window
		fmt.Sprintf("12,0.8,%.4f,900", ms(0.8)),      // height
		fmt.Sprintf("0.7,0.8,%.4f,50", ms(0.8)),      // outside the space's periods (1–60 d)
		"NA,0.8,5,50",                                // missing
		"12,abc,5,50",                                // not a number
		"-3,0.8,5,50",                                // period not positive
		"12,0.8,5",                                   // wrong number of fields
		fmt.Sprintf("30,1.2,%.4f,50", ms(1.2)),       // passes the cuts, its cell left out ("young")
		fmt.Sprintf("5,0.6,%.4f,50", ms(0.6)),        // passes the cuts, its cell left out ("unreached")
	}
	path, sha := writeCatalog(t, rows)
	sp, err := NewSpace(0.45, 1.6, 8, 1, 60, 10, []float64{0, 100, 200, 400, 800})
	require.NoError(t, err)
	young, unreached := sp.Index2D(1.2, 30), sp.Index2D(0.6, 5)
	require.True(t, young >= 0 && unreached >= 0 && young != unreached && young != sp.Index2D(0.8, 12) && young != sp.Index2D(1.0, 20))
	spec := DataSpec{Path: path, SHA256: strings.ToUpper(sha), Mapping: catalog.Mapping{Period: "period_d", Color: "b_v", AbsMag: "abs_mag_v", Height: "z_pc"}, Cuts: cuts, Relations: rel,
		LeaveOut: func(cell int) string {
			switch cell {
			case young:
				return "young"
			case unreached:
				return "unreached"
			}
			return ""
		}}
	var rej bytes.Buffer
	obs, err := ReadObserved(spec, sp, &rej)
	require.NoError(t, err)
	assert.Equal(t, 2, obs.N)
	assert.Len(t, obs.Stars, 4, "stars left out of the comparison still passed the cuts")
	var total float64
	for _, v := range obs.Counts {
		total += v
	}
	assert.Equal(t, 2.0, total)
	assert.Equal(t, 1.0, obs.Counts[sp.Index(1.0, 20, 120)])
	assert.Equal(t, map[string]int{CutColor: 1, CutMainSequence: 1, CutPeriodWindow: 1, CutHeight: 1, CutOutsideSpace: 1}, obs.CutAway)
	assert.Equal(t, map[string]int{"missing value": 1, "not a number": 1, "period not positive": 1, "wrong number of fields": 1}, obs.Rejected)
	assert.Equal(t, map[string]int{"young": 1, "unreached": 1}, obs.LeftOut)
	assert.Equal(t, 13, obs.Rows)
	assert.Equal(t, sha, obs.SHA256)

	// rejected.csv lists every row not compared, once, with the reason it
	// was counted under: the counts add up to the rows listed.
	recs, err := csv.NewReader(&rej).ReadAll()
	require.NoError(t, err)
	require.NotEmpty(t, recs)
	assert.Equal(t, []string{"line", "reason", "column", "value", "raw"}, recs[0])
	listed := map[string]int{}
	lineSeen := map[string]bool{}
	for _, r := range recs[1:] {
		listed[r[1]]++
		assert.False(t, lineSeen[r[0]], "line %s listed twice", r[0])
		lineSeen[r[0]] = true
	}
	want := map[string]int{}
	for k, n := range obs.Rejected {
		want[k] += n
	}
	for k, n := range obs.CutAway {
		if n > 0 {
			want["cut: "+k] += n
		}
	}
	for k, n := range obs.LeftOut {
		want["left out: "+k] += n
	}
	assert.Equal(t, want, listed)
	assert.Equal(t, obs.Rows-obs.N, len(recs)-1, "every row not compared is listed")
	byLine := map[string][]string{}
	for _, r := range recs[1:] {
		byLine[r[0]] = r
	}
	// Lines count from the header (line 1); the rows above start at line 2.
	assert.Equal(t, []string{"9", "missing value", "period_d", "NA", "NA,0.8,5,50"}, byLine["9"])
	assert.Equal(t, []string{"4", "cut: color", "b_v", "0.3", rows[2]}, byLine["4"])
	assert.Equal(t, "cut: main_sequence", byLine["5"][1])
	assert.Equal(t, "b_v, abs_mag_v", byLine["5"][2])
	assert.Equal(t, []string{"6", "cut: period_window", "period_d", "150", rows[4]}, byLine["6"])
	assert.Equal(t, []string{"7", "cut: height", "z_pc", "900", rows[5]}, byLine["7"])
	assert.Equal(t, []string{"8", "cut: outside_space", "period_d", "0.7", rows[6]}, byLine["8"])
	assert.Equal(t, []string{"13", "left out: young", "b_v, period_d", "1.2, 30", rows[11]}, byLine["13"])
	assert.Equal(t, "left out: unreached", byLine["14"][1])

	// Every kept row agrees with KeepStar, and the cut-away ones do not.
	for _, s := range obs.Stars {
		ok, _ := KeepStar(cuts, rel, s.BV, s.AbsMagV, 0, s.PeriodD, s.ZPc)
		assert.True(t, ok)
	}

	// A comparison in three dimensions leaves out single (color, period,
	// height) bins too, after the (color, period) cells, and lists them
	// with the height.
	bin := sp.Index(1.0, 20, 120)
	spec.LeaveOutBin = func(i int) string {
		if i == bin {
			return "bin unreached"
		}
		return ""
	}
	rej.Reset()
	obs3, err := ReadObserved(spec, sp, &rej)
	require.NoError(t, err)
	assert.Equal(t, 1, obs3.N)
	assert.Equal(t, 0.0, obs3.Counts[bin])
	assert.Equal(t, map[string]int{"young": 1, "unreached": 1, "bin unreached": 1}, obs3.LeftOut)
	assert.Contains(t, rej.String(), `left out: bin unreached,"b_v, period_d, |z|"`)
	spec.LeaveOutBin = nil

	spec.SHA256 = strings.Repeat("0", 64)
	_, err = ReadObserved(spec, sp, nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), path)
	assert.Contains(t, err.Error(), sha)
	assert.Contains(t, err.Error(), strings.Repeat("0", 64))

	spec.Relations = nil
	_, err = ReadObserved(spec, sp, nil)
	assert.ErrorContains(t, err, "relations")
	assert.False(t, math.IsNaN(total))
}

// The same catalog as a FITS binary table: the same stars kept and cut,
// nulls counted as missing values, and a declared format checked.
func TestReadObservedFITS(t *testing.T) {
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	cuts := model.Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 0.4, MSBandFaintMag: 0.4, PeriodMinD: 0.5, PeriodMaxD: 100, HeightMaxPc: 600}
	ms := func(bv float64) float64 { m, ok := rel.AbsMagVAtBV(bv); require.True(t, ok); return m }
	nan := math.NaN()
	rows := [][4]float64{
		{12, 0.8, ms(0.8), 50}, {20, 1.0, ms(1.0) + 0.1, -120}, {12, 0.3, ms(0.8), 50}, {12, 0.8, ms(0.8) - 1.0, 50},
		{150, 0.8, ms(0.8), 50}, {12, 0.8, ms(0.8), 900}, {0.7, 0.8, ms(0.8), 50}, {nan, 0.8, 5, 50}, {-3, 0.8, 5, 50},
	}
	path := filepath.Join(t.TempDir(), "cat.fits")
	w, err := fitstable.Create(path, "STARS", []fitstable.WriteColumn{
		{Name: "period_d", Unit: "d", Type: fitstable.Float64}, {Name: "b_v", Unit: "mag", Type: fitstable.Float64},
		{Name: "abs_mag_v", Unit: "mag", Type: fitstable.Float64}, {Name: "z_pc", Unit: "pc", Type: fitstable.Float64},
	})
	require.NoError(t, err)
	for _, r := range rows {
		for i, v := range r {
			w.SetFloat64(i, v)
		}
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	sp, err := NewSpace(0.45, 1.6, 8, 1, 60, 10, []float64{0, 100, 200, 400, 800})
	require.NoError(t, err)
	spec := DataSpec{Path: path, Format: "fits", Extension: "STARS", Mapping: catalog.Mapping{Period: "period_d", Color: "b_v", AbsMag: "abs_mag_v", Height: "z_pc"}, Cuts: cuts, Relations: rel}
	var rej bytes.Buffer
	obs, err := ReadObserved(spec, sp, &rej)
	require.NoError(t, err)
	assert.Equal(t, 2, obs.N)
	assert.Equal(t, map[string]int{CutColor: 1, CutMainSequence: 1, CutPeriodWindow: 1, CutHeight: 1, CutOutsideSpace: 1}, obs.CutAway)
	assert.Equal(t, map[string]int{"missing value": 1, "period not positive": 1}, obs.Rejected)
	assert.Equal(t, 9, obs.Rows)
	assert.Contains(t, rej.String(), "\n8,missing value,period_d,,")
	assert.Contains(t, rej.String(), "\n3,cut: color,b_v,0.3,\"period_d=12, b_v=0.3, ", "a FITS row is listed by its row number, with the mapped columns")
	assert.Equal(t, obs.Rows-obs.N+1, strings.Count(rej.String(), "\n"), "every row not compared is listed")

	spec.Format = "csv"
	_, err = ReadObserved(spec, sp, nil)
	require.ErrorIs(t, err, catalog.ErrFormat)
	assert.Contains(t, err.Error(), `the declared format is "csv", but the file is a FITS file`)
	assert.Contains(t, err.Error(), path)
}

// Cells no template star reached are left out of the data, counted.
func TestDropUnreachedBins(t *testing.T) {
	sp, err := NewSpace(0.5, 1.5, 2, 1, 100, 2, []float64{0, 100, 200})
	require.NoError(t, err)
	nb := sp.NumBins() // 2 colors × 2 periods × 2 heights
	tpl := &Templates{Space: sp, AgeEdgesGyr: []float64{0, 1, 2}, Counts: make([]float64, 2*nb)}
	tpl.Counts[0*nb+0*2+1] = 3 // cell 0 reached in age bin 0 (upper |z| bin)
	tpl.Counts[1*nb+2*2+0] = 1 // cell 2 reached in age bin 1
	obs := &Observed{Counts: []float64{1, 2, 4, 0, 5, 0, 0, 7}, N: 19}
	stars, cells := obs.DropUnreached(tpl)
	assert.Equal(t, 11, stars, "cells 1 (4 stars) and 3 (7 stars) were never reached")
	assert.Equal(t, 2, cells)
	assert.Equal(t, []float64{1, 2, 0, 0, 5, 0, 0, 0}, obs.Counts)
	assert.Equal(t, 8, obs.N)
}

// A dereddened band reads each catalog star's extinction from the dust
// model at its parallax distance: a reddened dwarf on the sequence is kept
// by a tight band with the dust out, cut by the band as measured. Without
// a parallax column there is no distance, and the reader says so. Reddening
// by E(B−V) = A_V/3.1 (Cardelli, Clayton & Mathis 1989) [memory].
func TestReadObservedDereddenedBand(t *testing.T) {
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	mv0, ok := rel.AbsMagVAtBV(0.6)
	require.True(t, ok)
	const dPc, avPerKpc = 500.0, 1.24 // A_V 0.62, E(B−V) 0.2
	av := avPerKpc * dPc / 1000
	v := mv0 + av + 5*math.Log10(dPc/10)
	dir := t.TempDir()
	path := filepath.Join(dir, "reddened.csv")
	body := fmt.Sprintf("period_d,b_v,v_mag,plx_mas,z_pc\n12,%.4f,%.4f,%.4f,40\n", 0.6+av/3.1, v, 1000/dPc)
	require.NoError(t, os.WriteFile(path, []byte(body), 0o644))
	sp, err := NewSpace(0.45, 1.6, 8, 1, 60, 10, []float64{0, 100, 200, 400, 800})
	require.NoError(t, err)
	cuts := model.Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 0.02, MSBandFaintMag: 0.02, PeriodMinD: 0.5, PeriodMaxD: 100}
	spec := DataSpec{Path: path, Mapping: catalog.Mapping{Period: "period_d", Color: "b_v", AppMag: "v_mag", Parallax: "plx_mas", Height: "z_pc"},
		Cuts: cuts, Relations: rel, Dust: func(d, _ float64) float64 { return avPerKpc * d / 1000 }}
	obs, err := ReadObserved(spec, sp, nil)
	require.NoError(t, err)
	assert.Equal(t, 1, obs.CutAway[CutMainSequence], "as measured, the reddened dwarf lies off a 0.02 mag band")
	spec.Cuts.MSBandDereddened = true
	obs, err = ReadObserved(spec, sp, nil)
	require.NoError(t, err)
	assert.Equal(t, 1, obs.N, "with the dust out it is on the sequence")

	spec.Mapping = catalog.Mapping{Period: "period_d", Color: "b_v", AbsMag: "v_mag", Height: "z_pc"}
	_, err = ReadObserved(spec, sp, nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "reddened.csv")
	assert.Contains(t, err.Error(), "parallax_mas")
}

// On a dereddened color axis a star takes the column of its color less
// the dust model's E(B−V) = A_V/3.1 (R_V = 3.1, Cardelli, Clayton & Mathis
// 1989 [memory]) at its parallax distance: a dwarf of B−V 0.62 seen
// through E(B−V) = 0.2 is measured at 0.82, in the 0.80–0.85 column as
// measured and the 0.60–0.65 column dereddened. One measured at 0.50 is
// intrinsically 0.30, bluer than the space: left out, and rejected.csv
// says by what.
func TestReadObservedDereddenedColorAxis(t *testing.T) {
	const dPc, avPerKpc = 500.0, 1.24 // A_V 0.62, E(B−V) 0.2
	ebv := avPerKpc * dPc / 1000 / 3.1
	dir := t.TempDir()
	path := filepath.Join(dir, "reddened.csv")
	body := fmt.Sprintf("period_d,b_v,v_mag,plx_mas,z_pc\n12,%.4f,14,%.4f,40\n5,%.4f,14,%.4f,40\n", 0.62+ebv, 1000/dPc, 0.30+ebv, 1000/dPc)
	require.NoError(t, os.WriteFile(path, []byte(body), 0o644))
	sp, err := NewSpace(0.45, 1.6, 23, 1, 60, 10, nil) // 0.05 mag columns
	require.NoError(t, err)
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	// A band 10 mag wide keeps both stars: the test is of the columns.
	cuts := model.Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 10, MSBandFaintMag: 10, PeriodMinD: 0.5, PeriodMaxD: 100}
	spec := DataSpec{Path: path, Mapping: catalog.Mapping{Period: "period_d", Color: "b_v", AppMag: "v_mag", Parallax: "plx_mas", Height: "z_pc"},
		Cuts: cuts, Relations: rel, Dust: func(d, _ float64) float64 { return avPerKpc * d / 1000 }}
	column := func(obs *Observed) []int {
		var cols []int
		for i, n := range obs.Counts {
			if n > 0 {
				cols = append(cols, i/(sp.NumLogPeriod()*sp.NumHeight()))
			}
		}
		return cols
	}
	obs, err := ReadObserved(spec, sp, nil)
	require.NoError(t, err)
	assert.Equal(t, []int{1, 7}, column(obs), "as measured: 0.50–0.55 and 0.80–0.85")

	sp.Dereddened = true
	var rejects bytes.Buffer
	obs, err = ReadObserved(spec, sp, &rejects)
	require.NoError(t, err)
	assert.Equal(t, []int{3}, column(obs), "dereddened: 0.60–0.65")
	assert.Equal(t, 1, obs.CutAway[CutOutsideSpace])
	assert.Contains(t, rejects.String(), "b_v less the dust's E(B−V)")
	assert.Contains(t, rejects.String(), "0.3", "its color dereddened")
	require.Len(t, obs.Stars, 1)
	assert.InDelta(t, 0.62+ebv, obs.Stars[0].BV, 1e-4, "a star keeps its color as measured")
	assert.InDelta(t, 0.62, obs.Stars[0].ColumnBV, 1e-4)

	spec.Mapping = catalog.Mapping{Period: "period_d", Color: "b_v", AbsMag: "v_mag", Height: "z_pc"}
	_, err = ReadObserved(spec, sp, nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "reddened.csv")
	assert.Contains(t, err.Error(), `compare.color_axis = "dereddened"`)
	assert.Contains(t, err.Error(), "parallax_mas")
}
