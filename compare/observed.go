package compare

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"spinpop/compare/catalog"
	"spinpop/internal/regular"
	"spinpop/model"
)

// DataSpec says where an observed catalog is and how to read and cut it.
type DataSpec struct {
	Path string // the catalog file (CSV, ECSV, FITS or Parquet), as named in messages
	// Open, if not nil, opens the catalog instead of os.Open(Path): for
	// catalogs inside an embedded file system.
	Open      func() (io.ReadCloser, error)
	SHA256    string          // expected hex SHA-256 of the file's bytes; "" skips the check
	Format    string          // declared format (catalog.Options.Format); "" or "auto" takes it from the content
	Extension string          // FITS: the extension by EXTNAME or number (catalog.Options.Extension)
	Mapping   catalog.Mapping // column names; Color is B−V, AbsMag is M_V
	SunZPc    float64         // z☉ added to d sin b when heights are derived from parallax
	Cuts      model.Cuts      // the catalog cuts, the same the model applies
	Relations *model.Relations
	// Dust is the scenario's dust model, which a dereddened band cut
	// (Cuts.MSBandDereddened) and a dereddened color axis (Space.Dereddened)
	// read at each star's distance and height; nil: no dust.
	Dust model.Extinction
	// LeaveOut, if not nil, names why a star that passed the cuts is left
	// out of the comparison for the (color, period) cell it falls in
	// (Space.Index2D), or returns "" to keep it. Such stars stay in
	// Observed.Stars (the height check uses every star that passed the
	// cuts) but not in Counts.
	LeaveOut func(cell int) string
	// LeaveOutBin is LeaveOut for a whole (color, period, height) bin
	// (Space.Index), asked after LeaveOut keeps the star: for a comparison
	// in three dimensions, whose bins the templates may miss one height
	// at a time.
	LeaveOutBin func(bin int) string
}

// ObservedStar is one star that passed every cut and lies in the space.
type ObservedStar struct {
	BV, AbsMagV, PeriodD, ZPc float64
	// ColumnBV is the color that chose its column: BV, or BV less its
	// reddening for a dereddened space (Space.AxisColor).
	ColumnBV float64
}

// Observed is an observed catalog binned in a Space.
type Observed struct {
	Counts   []float64      // per Space bin (3-D)
	N        int            // stars counted: Σ Counts
	Rows     int            // data rows read, usable or not
	Rejected map[string]int // unusable rows, by reason (catalog.Reason text)
	CutAway  map[string]int // usable rows removed by each cut (CutNames)
	LeftOut  map[string]int // stars past the cuts left out by DataSpec.LeaveOut, by its reason
	SHA256   string         // hex SHA-256 of the file's bytes
	Stars    []ObservedStar // the counted stars, in file order
}

// ReadObserved reads the catalog of spec, cuts it as the model is cut
// (KeepStar), and bins the kept stars in space; stars that pass the cuts
// but fall outside the space are counted under CutOutsideSpace, and stars
// in cells spec.LeaveOut names are counted in LeftOut. Every row not
// counted in the space is written to rejects as CSV with the columns
// line, reason, column, value, raw (nil discards them): unusable rows
// (missing or malformed values) with the reader's reason, cut rows with
// "cut: " and the cut's name (CutNames), rows left out with "left out: "
// and LeaveOut's reason. So Rows = N + the rows written. A file whose
// SHA-256 differs from spec.SHA256 is an error naming the file and both
// hashes.
func ReadObserved(spec DataSpec, space Space, rejects io.Writer) (*Observed, error) {
	if spec.Relations == nil {
		return nil, errors.New("compare: ReadObserved needs the main-sequence relations for the color–magnitude cut")
	}
	obs := &Observed{
		Counts:   make([]float64, space.NumBins()),
		Rejected: map[string]int{},
		CutAway:  map[string]int{},
		LeftOut:  map[string]int{},
	}
	for _, c := range CutNames {
		obs.CutAway[c] = 0
	}
	opt := catalog.Options{Mapping: spec.Mapping, ZSunPc: spec.SunZPc, Format: spec.Format, Extension: spec.Extension}
	var sink *catalog.CSVRejectWriter
	if rejects != nil {
		sink = catalog.NewCSVRejectWriter(rejects)
		opt.Rejects = sink
	}
	open := spec.Open
	if open == nil {
		open = func() (io.ReadCloser, error) { return regular.Open(spec.Path) }
	}
	f, err := open()
	if err != nil {
		return nil, fmt.Errorf("compare: observed catalog %s cannot be opened: %w", spec.Path, err)
	}
	defer f.Close()
	opt.Name = spec.Path
	sum, err := catalog.Read(f, opt, func(_ int, s catalog.Star) error {
		av := 0.0
		if (spec.Cuts.MSBandDereddened || space.Dereddened) && spec.Dust != nil {
			if math.IsNaN(s.DistPc) {
				keys, undo := dereddenedSettings(spec, space)
				return fmt.Errorf("%s needs each star's distance for its extinction, and %s maps no parallax column (an absolute-magnitude column alone gives none): map data.columns.parallax_mas, or set %s", keys, spec.Path, undo)
			}
			av = spec.Dust(s.DistPc, s.ZPc)
		}
		axisBV := space.AxisColor(s.Color, av)
		ok, why := KeepStar(spec.Cuts, spec.Relations, s.Color, s.AbsMag, av, s.PeriodD, s.ZPc)
		if !ok {
			obs.CutAway[why]++
			return cutDetail(spec, space, s, axisBV, why)
		}
		i := space.Index(axisBV, s.PeriodD, s.ZPc)
		if i < 0 {
			obs.CutAway[CutOutsideSpace]++
			return cutDetail(spec, space, s, axisBV, CutOutsideSpace)
		}
		obs.Stars = append(obs.Stars, ObservedStar{BV: s.Color, AbsMagV: s.AbsMag, PeriodD: s.PeriodD, ZPc: s.ZPc, ColumnBV: axisBV})
		if spec.LeaveOut != nil {
			if why := spec.LeaveOut(space.Index2D(axisBV, s.PeriodD)); why != "" {
				obs.LeftOut[why]++
				return &catalog.Exclude{Reason: "left out: " + why, Column: spec.Mapping.Color + ", " + spec.Mapping.Period,
					Value: fmtValue(s.Color) + ", " + fmtValue(s.PeriodD)}
			}
		}
		if spec.LeaveOutBin != nil {
			if why := spec.LeaveOutBin(i); why != "" {
				obs.LeftOut[why]++
				return &catalog.Exclude{Reason: "left out: " + why, Column: spec.Mapping.Color + ", " + spec.Mapping.Period + ", |z|",
					Value: fmtValue(s.Color) + ", " + fmtValue(s.PeriodD) + ", " + fmtValue(math.Abs(s.ZPc))}
			}
		}
		obs.Counts[i]++
		obs.N++
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("compare: reading observed catalog: %w", err)
	}
	if sink != nil {
		if err := sink.Flush(); err != nil {
			return nil, fmt.Errorf("compare: writing rejected rows of %s: %w", spec.Path, err)
		}
	}
	obs.SHA256 = sum.SHA256Hex()
	if want := strings.ToLower(strings.TrimSpace(spec.SHA256)); want != "" && want != obs.SHA256 {
		return nil, fmt.Errorf("compare: observed catalog %s has SHA-256 %s, but the scenario expects %s; point data.file at the intended catalog or update data.sha256", spec.Path, obs.SHA256, want)
	}
	obs.Rows = sum.Rows
	for r, n := range sum.Rejected {
		if n > 0 {
			obs.Rejected[r.String()] = n
		}
	}
	return obs, nil
}

// CheckCatalog reads the catalog of spec through once, without cutting or
// binning it: the format, the column mapping, every row's syntax and the
// SHA-256. Cuts and Relations are not needed. Commands call it before
// building templates, so that a malformed catalog is reported in a moment
// rather than after minutes of simulation; the errors are ReadObserved's.
func CheckCatalog(spec DataSpec) error {
	open := spec.Open
	if open == nil {
		open = func() (io.ReadCloser, error) { return regular.Open(spec.Path) }
	}
	f, err := open()
	if err != nil {
		return fmt.Errorf("compare: observed catalog %s cannot be opened: %w", spec.Path, err)
	}
	defer f.Close()
	opt := catalog.Options{Mapping: spec.Mapping, ZSunPc: spec.SunZPc, Format: spec.Format, Extension: spec.Extension, Name: spec.Path}
	sum, err := catalog.Read(f, opt, nil)
	if err != nil {
		return fmt.Errorf("compare: reading observed catalog: %w", err)
	}
	if want := strings.ToLower(strings.TrimSpace(spec.SHA256)); want != "" && want != sum.SHA256Hex() {
		return fmt.Errorf("compare: observed catalog %s has SHA-256 %s, but the scenario expects %s; point data.file at the intended catalog or update data.sha256", spec.Path, sum.SHA256Hex(), want)
	}
	return nil
}

// dereddenedSettings names the settings that need each star's extinction
// (keys) and how to do without them (undo), for the error of a catalog
// without distances.
func dereddenedSettings(spec DataSpec, space Space) (keys, undo string) {
	var k, u []string
	if spec.Cuts.MSBandDereddened {
		k, u = append(k, "cuts.ms_band_dereddened"), append(u, "ms_band_dereddened = false")
	}
	if space.Dereddened {
		k, u = append(k, `compare.color_axis = "dereddened"`), append(u, `color_axis = "measured"`)
	}
	return strings.Join(k, " and "), strings.Join(u, " and ")
}

// cutDetail says which value made a cut remove a star, for its row in
// rejected.csv: the column as mapped, or the derived quantity (M_V from
// apparent magnitude and parallax, z from parallax and position). axisBV
// is the color its column is chosen by (Space.AxisColor).
func cutDetail(spec DataSpec, space Space, s catalog.Star, axisBV float64, cut string) *catalog.Exclude {
	m := spec.Mapping
	ex := &catalog.Exclude{Reason: "cut: " + cut}
	absMag, height := m.AbsMag, m.Height
	if absMag == "" {
		absMag = "M_V from " + m.AppMag + " and " + m.Parallax
	}
	if height == "" {
		height = "z from " + m.Parallax + " and the position"
	}
	switch cut {
	case CutColor:
		ex.Column, ex.Value = m.Color, fmtValue(s.Color)
	case CutMainSequence:
		ex.Column, ex.Value = m.Color+", "+absMag, fmtValue(s.Color)+", "+fmtValue(s.AbsMag)
	case CutPeriodWindow:
		ex.Column, ex.Value = m.Period, fmtValue(s.PeriodD)
	case CutHeight:
		ex.Column, ex.Value = height, fmtValue(s.ZPc)
	case CutOutsideSpace:
		// The first dimension of the comparison space the star lies outside.
		switch {
		case binOf(space.ColorEdges, axisBV) < 0 && space.Dereddened:
			ex.Column, ex.Value = m.Color+" less the dust's E(B−V)", fmtValue(axisBV)
		case binOf(space.ColorEdges, axisBV) < 0:
			ex.Column, ex.Value = m.Color, fmtValue(s.Color)
		case !(s.PeriodD > 0) || binOf(space.LogPeriodEdges, math.Log10(s.PeriodD)) < 0:
			ex.Column, ex.Value = m.Period, fmtValue(s.PeriodD)
		default:
			ex.Column, ex.Value = height, fmtValue(s.ZPc)
		}
	}
	return ex
}

// fmtValue writes a value the way rejected.csv shows it: enough digits to
// see why it was cut.
func fmtValue(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// DropUnreached removes from the data counts the (color, period)
// cells that no template star reached in any age bin. Such cells make
// every history impossible, and they are almost always the thin edge of
// the space (rare aliases of the bluest stars) where a finite template run
// happens to have drawn nothing; comparing on the cells the model reaches
// is the honest alternative to a spurious rejection. The stars left out
// are counted for the caller to report, never hidden. Observed.Stars keeps
// every star that passed the cuts.
func (obs *Observed) DropUnreached(tpl *Templates) (stars, cells int) {
	return obs.DropCells(tpl.Space, UnreachedCells(tpl))
}

// UnreachedCells marks the (color, period) cells that no template star
// reached in any age bin or height bin (NumColorPeriod values, true =
// unreached).
func UnreachedCells(tpl *Templates) []bool {
	sp := tpl.Space
	nb, nz := sp.NumBins(), sp.NumHeight()
	out := make([]bool, sp.NumColorPeriod())
	for cell := range out {
		reached := false
		for k := 0; k < tpl.NumAgeBins() && !reached; k++ {
			for z := 0; z < nz; z++ {
				if tpl.Counts[k*nb+cell*nz+z] > 0 {
					reached = true
					break
				}
			}
		}
		out[cell] = !reached
	}
	return out
}

// UnreachedBins reports the (color, period, height) bins (Space.Index)
// that no template star of any age bin reached.
func UnreachedBins(tpl *Templates) []bool {
	nb := tpl.Space.NumBins()
	out := make([]bool, nb)
	for i := range out {
		reached := false
		for k := 0; k < tpl.NumAgeBins(); k++ {
			if tpl.Counts[k*nb+i] > 0 {
				reached = true
				break
			}
		}
		out[i] = !reached
	}
	return out
}

// DropCells removes from the data counts the (color, period) cells that
// mask marks (NumColorPeriod values, true = left out), and returns how many
// stars and non-empty cells it removed; see Templates.ZeroCells, which
// removes the same cells from the model.
func (obs *Observed) DropCells(sp Space, mask []bool) (stars, cells int) {
	nz := sp.NumHeight()
	for cell, out := range mask {
		if !out {
			continue
		}
		n := 0
		for z := 0; z < nz; z++ {
			n += int(obs.Counts[cell*nz+z])
			obs.Counts[cell*nz+z] = 0
		}
		if n > 0 {
			stars += n
			cells++
		}
	}
	obs.N -= stars
	return stars, cells
}
