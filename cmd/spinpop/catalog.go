package main

import (
	"bufio"
	"io"
	"math"
	"strconv"

	"spinpop/model"
)

// catalogColumns are the columns of catalog.csv, units in the names.
var catalogColumns = []string{
	"mass_msun", "companion_mass_msun", "age_gyr", "feh_dex", "teff_k",
	"b_v_mag", "v_ks_mag", "obs_b_v_mag",
	"abs_mag_v", "abs_mag_band", "obs_abs_mag_band", "app_mag_band", "a_v_mag",
	"distance_pc", "l_deg", "b_deg", "z_pc",
	"period_true_d", "period_measured_d", "rossby", "amplitude_ppm", "noise_ppm",
	"detected", "binary", "evolved", "tidal_lock", "alias",
}

// catalogWriter streams catalogue rows; rows are formatted by hand with
// strconv (shortest round-trip floats) because encoding/csv plus
// fmt would dominate the run time of a large catalogue.
type catalogWriter struct {
	w    *bufio.Writer
	buf  []byte
	rows int64
}

func newCatalogWriter(w io.Writer) *catalogWriter {
	cw := &catalogWriter{w: bufio.NewWriterSize(w, 1<<20)}
	for i, c := range catalogColumns {
		if i > 0 {
			cw.w.WriteByte(',')
		}
		cw.w.WriteString(c)
	}
	cw.w.WriteByte('\n')
	return cw
}

func (cw *catalogWriter) add(c *model.Chunk) error {
	for i := 0; i < c.N; i++ {
		f := c.Flags[i]
		if !f.Selected() {
			continue
		}
		b := cw.buf[:0]
		for j, x := range []float64{c.MassMsun[i], c.CompanionMsun[i], c.AgeGyr[i], c.FeH[i], c.TeffK[i],
			c.BV[i], c.VKs[i], c.ObsBV[i],
			c.AbsMagV[i], c.AbsMagBand[i], c.ObsAbsMag[i], c.AppMag[i], c.AV[i],
			c.DistPc[i], c.LDeg[i], c.BDeg[i], c.ZPc[i],
			c.PeriodD[i], c.MeasPeriodD[i], c.Rossby[i], c.AmpPpm[i], c.NoisePpm[i]} {
			if j > 0 {
				b = append(b, ',')
			}
			b = appendFloat(b, x)
		}
		for _, fl := range []model.Flag{model.FlagDetected, model.FlagBinary, model.FlagEvolved, model.FlagTidalLock} {
			b = append(b, ',')
			if f&fl != 0 {
				b = append(b, '1')
			} else {
				b = append(b, '0')
			}
		}
		switch {
		case f&model.FlagHalfAlias != 0:
			b = append(b, ",half\n"...)
		case f&model.FlagDoubleAlias != 0:
			b = append(b, ",double\n"...)
		default:
			b = append(b, ",none\n"...)
		}
		cw.buf = b
		if _, err := cw.w.Write(b); err != nil {
			return err
		}
		cw.rows++
	}
	return nil
}

func (cw *catalogWriter) flush() error { return cw.w.Flush() }

// appendFloat writes x with 6 significant digits: far below any measurement
// error in the catalogue, and a third of the bytes of a full round trip.
func appendFloat(b []byte, x float64) []byte {
	if math.IsNaN(x) {
		return append(b, "nan"...)
	}
	return strconv.AppendFloat(b, x, 'g', 6, 64)
}
