package pipeline

import (
	"context"
	"fmt"
	"io"
	"path/filepath"
	"time"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// Comparison is everything the comparison jobs share: the scenario's run
// objects, the templates, the observed catalog and its likelihood, and the
// two hypotheses of the burst test.
type Comparison struct {
	Resolved  *scenarios.Resolved
	Scenario  *scenarios.Scenario
	Source    string // how the user named the scenario
	Built     *assemble.Built
	Space     compare.Space
	Templates *compare.Templates
	// TemplatesReused says the templates came from the cache, in
	// TemplateFile.
	TemplatesReused bool
	TemplateFile    string
	Observed        *compare.Observed
	DataFile        string // the catalog file read
	Likelihood      *compare.Likelihood
	Smooth, Burst   compare.HistoryModel
	// Nuisance holds the parameters of the physics and the selection in
	// compare.free (nil when there are none); Templates then holds the
	// templates re-observed at their scenario values, and every fit moves
	// them with the history (compare.FitJoint).
	Nuisance *compare.Nuisance
	// Sequence is where the catalog's main sequence was measured to lie
	// against the relation table (compare.measure_sequence), the table
	// moved there in Scenario; nil when not measured.
	Sequence *SequenceShift
	// Stage, if set, is told what long fits are doing (one line per
	// expansion of the templates), for progress reports.
	Stage        func(msg string)
	Workers      int
	MaxRounds    int // bounds each joint fit's expansions (0: compare.MaxRounds)
	SetupSeconds float64
	// Data stars left out because no template star reached their
	// (color, period) cell, and how many such cells there were.
	DroppedStars, DroppedBins int
	// Mask marks the (color, period) cells left out in data and model
	// alike (nil without one): those below the gyrochrone of
	// compare.mask_below_age_gyr, where MaskedStars data stars fell, and
	// those of BlueMask.
	Mask                    []bool
	MaskedStars, MaskedBins int
	// BlueMask marks the cells of the color columns that reddening can
	// fill with stars bluer than the law's calibrated colors, left out
	// with compare.mask_blue_of_law (nil otherwise); BlueStars data stars
	// fell there.
	BlueMask  []bool
	BlueStars int
	// OtherOut marks the cells another explanation of the same catalog
	// leaves out (test-alternatives scores every explanation on the same
	// stars); OtherStars data stars fell there. Nil outside such a test.
	OtherOut   []bool
	OtherStars int
	// ColorReach says how far reddening carries stars bluer than the
	// law's calibrated colors into the compared range (nil for a law
	// without one); its Warning is printed when the comparison reaches
	// into it.
	ColorReach *LawColorReach

	spec compare.DataSpec // how the catalog was read, for reading it again
}

// ComparisonOptions tune SetupComparison.
type ComparisonOptions struct {
	Source  string // how the user named the scenario, for reports and errors
	Workers int    // 0: GOMAXPROCS; results do not depend on it
	// TemplateDir is the folder of cached templates; "" or "none" builds
	// them afresh and caches nothing.
	TemplateDir string
	// WriteRejected, if set, is handed a function that writes the catalog
	// rows that could not be used (CSV); the caller decides where they go.
	WriteRejected func(write func(w io.Writer) error) error
	// TemplateProgress, if set, is told how many template stars are done.
	TemplateProgress func(done, total int64)
	// Warn, if set, is told of trouble the run goes on without (a
	// template cache that cannot be written, say).
	Warn func(msg string)
	// MaxRounds bounds the expansions of every joint fit (0:
	// compare.MaxRounds): a fit that stops at the limit while still
	// rising can be let run longer.
	MaxRounds int
	// SequenceProgress, if set, hears of each round of the sequence's
	// measurement (compare.measure_sequence).
	SequenceProgress func(msg string)
}

// RequireData checks that a scenario names an observed catalog and that
// the catalog reads (compare.CheckCatalog): format, columns, rows, checksum.
func RequireData(res *scenarios.Resolved, source string) error {
	if res.Scenario.Data.File == "" {
		return InputError{fmt.Errorf("%s has no [data] section: name an observed catalog with data.file and map its columns in [data.columns] (see spinpop examples fit)", source)}
	}
	// Open and read the catalog through once now, so that a missing file,
	// a FIFO, a wrong format, mapping or checksum is reported in a moment,
	// not after minutes of template building.
	f, err := res.OpenData()
	if err != nil {
		return InputError{err}
	}
	f.Close()
	if err := compare.CheckCatalog(dataSpec(res)); err != nil {
		return InputError{err}
	}
	return nil
}

// dataSpec is where the scenario's catalog is and how it is read; the
// cuts and relations are the caller's to add.
func dataSpec(res *scenarios.Resolved) compare.DataSpec {
	s := &res.Scenario
	return compare.DataSpec{
		Path: res.DataPath, SHA256: s.Data.SHA256, Mapping: assemble.Mapping(s), SunZPc: s.Disk.SunHeightPc,
		Format: s.Data.Format, Extension: s.Data.Extension,
		Open: func() (io.ReadCloser, error) {
			f, err := res.OpenData()
			if err != nil {
				return nil, err
			}
			return f, nil
		},
	}
}

// SetupComparison builds or reuses the scenario's templates, reads and
// cuts its observed catalog and prepares the likelihood and the
// hypotheses.
func SetupComparison(ctx context.Context, res *scenarios.Resolved, opts ComparisonOptions) (*Comparison, error) {
	start := time.Now()
	arg := opts.Source
	// The catalog is read in full below; RequireData (which reads it too)
	// is for callers that want a bad catalog reported before the templates.
	if res.Scenario.Data.File == "" {
		return nil, RequireData(res, arg)
	}
	var sequence *SequenceShift
	if res.Scenario.Compare.MeasureSequence {
		var err error
		if sequence, err = MeasureSequenceShift(ctx, res, arg, opts.SequenceProgress); err != nil {
			return nil, err
		}
		// The comparison runs on the scenario with the table moved: its
		// templates, its mocks and the catalog's band alike.
		moved := *res
		moved.Scenario.Stars.SequenceShiftBV, moved.Scenario.Stars.SequenceShiftMag = sequence.BV, sequence.Mag
		res = &moved
	}
	s := &res.Scenario
	workers := opts.Workers
	if workers <= 0 {
		workers = defaultWorkers()
	}
	c := &Comparison{Resolved: res, Scenario: s, Source: arg, Workers: workers, MaxRounds: opts.MaxRounds, Sequence: sequence}
	var err error
	if c.Built, err = Build(s, arg); err != nil {
		return nil, err
	}
	if c.Space, err = assemble.Space(s); err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", arg, err)}
	}
	key, err := assemble.TemplateKey(res)
	if err != nil {
		return nil, err
	}
	nuParams, err := assemble.NuisanceParams(s)
	if err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", arg, err)}
	}
	var margin *model.BankMargin
	if len(nuParams) > 0 {
		m := assemble.BankMargin(s)
		margin = &m
	}
	build := func() (*compare.Templates, error) {
		ints := make([]float64, len(c.Built.AgeEdgesGyr)-1)
		for k := range ints {
			ints[k] = c.Built.Sampler.BinIntegral(k)
		}
		t, err := compare.BuildTemplates(ctx, c.Built.Population, ints, c.Built.AgeEdgesGyr, c.Space, compare.TemplateOptions{
			Stars: s.Compare.TemplateStars, Seed: s.Run.Seed, ChunkStars: s.Run.ChunkStars, Workers: c.Workers,
			Progress: opts.TemplateProgress, Bank: margin,
		})
		if err != nil {
			return nil, err
		}
		t.Key = key
		return t, nil
	}
	switch {
	case margin != nil:
		// Nuisance parameters need the template run's stars, which the
		// cache does not keep: the run is made again.
		c.Templates, err = build()
	case opts.TemplateDir == "" || opts.TemplateDir == "none":
		c.Templates, err = build()
	default:
		c.Templates, c.TemplatesReused, err = compare.CachedOrBuild(opts.TemplateDir, key, build, func(e error) {
			if opts.Warn != nil {
				opts.Warn(fmt.Sprintf("%v; going on without the cache (choose another folder with --templates, or --templates none)", e))
			}
		})
		c.TemplateFile = filepath.Join(opts.TemplateDir, key+".tpl")
	}
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted while building templates; nothing was written")
		}
		return nil, fmt.Errorf("templates: %w", err)
	}
	if empty(c.Templates.Counts) {
		// The model, not the data, is empty: say so, with the step
		// that removed the last star, before the data are blamed.
		counts, err := SelectionCounts(ctx, res, arg, min(s.Compare.TemplateStars, 1_000_000), workers)
		if err != nil {
			return nil, err
		}
		return nil, InputError{fmt.Errorf("%s: %w; the observed catalog is not at fault and was not compared",
			arg, &EmptySelection{What: fmt.Sprintf("the model (none of its %d template stars)", c.Templates.StarsDrawn), Counts: counts})}
	}
	if s.Compare.MaskAgeGyr > 0 {
		c.Mask = compare.YoungMask(c.Space, c.GyrochroneAt(s.Compare.MaskAgeGyr), s.Compare.MaskMarginDex)
	}
	if c.ColorReach, err = c.lawColorReach(); err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", arg, err)}
	}
	if s.Compare.MaskBlueOfLaw && c.ColorReach.Exposed() {
		c.BlueMask = c.ColorReach.mask(c.Space)
		if top := c.Space.ColorEdges[c.Space.NumColor()]; c.ColorReach.ComparedFromBV >= top {
			return nil, InputError{fmt.Errorf("%s: compare.mask_blue_of_law leaves out every color column: reddening carries stars bluer than law %q's calibrated colors up to B−V = %.3f, beyond cuts.b_v_max = %g (narrow the field's distance, or set mask_blue_of_law = false)",
				arg, c.ColorReach.Law, c.ColorReach.ReachBV, top)}
		}
		if c.Mask == nil {
			c.Mask = make([]bool, len(c.BlueMask))
		}
		for cell, out := range c.BlueMask {
			c.Mask[cell] = c.Mask[cell] || out
		}
	}
	if c.Mask != nil {
		c.Templates.ZeroCells(c.Mask)
	}
	if margin != nil {
		if err := c.setNuisance(ctx, nuParams, key); err != nil {
			return nil, err
		}
	}

	spec := dataSpec(res)
	spec.Cuts, spec.Relations, spec.Dust = assemble.Cuts(s), c.Built.Relations, c.Built.Population.Dust
	c.DataFile = res.DataPath
	if err := c.readData(spec, opts.WriteRejected); err != nil {
		return nil, err
	}
	if c.Smooth, c.Burst, err = assemble.Hypotheses(s, c.Built.AgeEdgesGyr); err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", arg, err)}
	}
	c.SetupSeconds = time.Since(start).Seconds()
	return c, nil
}

// readData reads, cuts and bins the catalog of spec, leaves out the masked
// and unreached cells, and makes the likelihood.
func (c *Comparison) readData(spec compare.DataSpec, writeRejected func(write func(w io.Writer) error) error) error {
	// Stars in cells the comparison leaves out are listed in rejected.csv
	// with the rows the reader and the cuts left out, so the file holds
	// every row not compared. The mask is applied first (the templates are
	// zero there too, so its cells are also unreached).
	c.spec = spec
	unreached := compare.UnreachedCells(c.Templates)
	maskedIn := make([]int, len(unreached))
	droppedIn := make([]int, len(unreached))
	if lo := assemble.LikeOptions(c.Scenario); lo.Use3D {
		// Compared in three dimensions, a bin the templates miss at one
		// height is left out like a (color, period) cell they miss at all.
		un3 := compare.UnreachedBins(c.Templates)
		spec.LeaveOutBin = func(bin int) string {
			if un3[bin] {
				return LeftOutUnreached
			}
			return ""
		}
	}
	spec.LeaveOut = func(cell int) string {
		switch {
		case c.BlueMask != nil && c.BlueMask[cell]:
			return LeftOutBlue
		case c.Mask != nil && c.Mask[cell]:
			maskedIn[cell]++
			return LeftOutYoung
		case unreached[cell]:
			droppedIn[cell]++
			return LeftOutUnreached
		case c.OtherOut != nil && c.OtherOut[cell]:
			return LeftOutOther
		}
		return ""
	}
	read := func(w io.Writer) error {
		var err error
		c.Observed, err = compare.ReadObserved(spec, c.Space, w)
		return err
	}
	var err error
	if writeRejected != nil {
		err = writeRejected(read)
	} else {
		err = read(io.Discard)
	}
	if err != nil {
		return InputError{err}
	}
	c.MaskedStars, c.MaskedBins = c.Observed.LeftOut[LeftOutYoung], nonZero(maskedIn)
	c.DroppedStars, c.DroppedBins = c.Observed.LeftOut[LeftOutUnreached], nonZero(droppedIn)
	c.OtherStars = c.Observed.LeftOut[LeftOutOther]
	c.BlueStars = c.Observed.LeftOut[LeftOutBlue]
	if c.ColorReach != nil {
		c.ColorReach = c.ColorReach.withCatalog(c.Observed, c.BlueMask != nil, c.BlueStars)
	}
	if n := c.Observed.LeftOut[LeftOutUnreached]; c.Observed.N == 0 && n > 0 {
		// The catalog has stars; the model put none where they are.
		return InputError{fmt.Errorf("%s: the model's selection is too small or lies elsewhere: all %d catalog stars that pass the cuts lie in cells that none of the model's %.0f template stars in the comparison space reached (the catalog is not at fault; raise compare.template_stars, or compare the scenario's survey and cuts with the catalog's)",
			c.Source, n, sum(c.Templates.Counts))}
	}
	if c.Observed.N == 0 {
		return InputError{fmt.Errorf("%s: no star of the catalog passes the cuts and lies in the comparison space (cut away: %v; unusable: %v; left out: %v)", spec.Path, c.Observed.CutAway, c.Observed.Rejected, c.Observed.LeftOut)}
	}
	if c.Likelihood, err = compare.NewLikelihood(c.Templates, c.Observed.Counts, assemble.LikeOptions(c.Scenario)); err != nil {
		return InputError{fmt.Errorf("%s: %w", c.Source, err)}
	}
	return nil
}

// Reasons a star that passed the catalog cuts is left out of the
// comparison (Observed.LeftOut keys; rejected.csv says "left out: " and
// the reason).
const (
	LeftOutYoung     = "below_young_gyrochrone"              // compare.mask_below_age_gyr
	LeftOutUnreached = "cell_no_template_reached"            // no template star in its (color, period) cell, or in its (color, period, height) bin when heights are compared
	LeftOutOther     = "cell_another_explanation_leaves_out" // test-alternatives: masked or unreached under another explanation
	LeftOutBlue      = "color_bluer_than_law_reach"          // compare.mask_blue_of_law
)

func nonZero(n []int) int {
	k := 0
	for _, v := range n {
		if v > 0 {
			k++
		}
	}
	return k
}

// WithCatalog returns the comparison of the same scenario with another
// catalog file, read through the scenario's column mapping and cuts
// (format by content; no checksum): the templates, the stored template
// stars and the nuisance model are shared, so scoring many catalogs — a
// set of mocks, a catalog split in halves — costs one template run.
func (c *Comparison) WithCatalog(path string) (*Comparison, error) {
	d := *c
	d.Observed, d.Likelihood = nil, nil
	d.DataFile = path
	s := c.Scenario
	spec := compare.DataSpec{
		Path: path, Mapping: assemble.Mapping(s), SunZPc: s.Disk.SunHeightPc,
		Format: "auto", Cuts: assemble.Cuts(s), Relations: c.Built.Relations, Dust: c.Built.Population.Dust,
	}
	if err := d.readData(spec, nil); err != nil {
		return nil, err
	}
	return &d, nil
}

// GyrochroneAt returns the scenario law's gyrochrone of one age as a
// function of B−V, for the height check's young/old split.
func (c *Comparison) GyrochroneAt(ageGyr float64) func(bv float64) (float64, bool) {
	return func(bv float64) (float64, bool) {
		m, ok := c.Built.Relations.MassFromBV(bv)
		if !ok {
			return 0, false
		}
		pt, _ := c.Built.Relations.At(m)
		return model.GyrochronePeriod(c.Built.Law, spin.Star{MassMsun: m, AgeGyr: ageGyr, BV: bv, TeffK: pt.TeffK})
	}
}

// ReportHead opens every report of a comparison: what ran, on which
// scenario, and the catalog as read.
type ReportHead struct {
	Tool         string      `json:"tool"`
	Version      string      `json:"version"`
	Scenario     string      `json:"scenario"`
	ScenarioName string      `json:"scenario_name"`
	ScenarioHash string      `json:"scenario_sha256"`
	Data         DataSummary `json:"data"`
}

func (c *Comparison) reportHead() ReportHead {
	return ReportHead{Tool: "spinpop", Version: Version, Scenario: c.Source, ScenarioName: c.Scenario.Name,
		ScenarioHash: c.Resolved.Hash(), Data: c.DataSummary()}
}

// DataSummary describes the catalog as read and the templates it is
// compared with.
type DataSummary struct {
	File       string         `json:"file"`
	SHA256     string         `json:"sha256"`
	Rows       int            `json:"rows"`
	Compared   int            `json:"stars_compared"`
	Unusable   map[string]int `json:"unusable_rows"`
	CutAway    map[string]int `json:"cut_away"`
	LeftOut    int            `json:"rows_not_compared"` // Rows − Compared: the rows of rejected.csv
	Templates  string         `json:"templates_file,omitempty"`
	TplReused  bool           `json:"templates_reused"`
	TplStars   int64          `json:"template_stars"`
	AgeBins    int            `json:"age_bins"`
	SpaceBins  int            `json:"comparison_bins"`
	SetupSecs  float64        `json:"setup_seconds"`
	Dropped    int            `json:"stars_in_cells_no_template_reached"`
	OtherOut   int            `json:"stars_in_cells_another_explanation_leaves_out,omitempty"`
	Masked     int            `json:"stars_below_youngest_gyrochrone"`
	BlueMasked int            `json:"stars_bluer_than_law_reach"`
	MaskAgeGyr float64        `json:"mask_below_age_gyr"`
	ScenarioSH string         `json:"scenario_sha256"`
	ColorReach *LawColorReach `json:"law_color_reach,omitempty"`
	BurstBins  *BurstAgeBins  `json:"burst_age_bins,omitempty"`
	Sequence   *SequencePlace `json:"sequence_shift,omitempty"`
}

// SequencePlace is the shift of the relation table a comparison measured
// (compare.measure_sequence) and used: the [stars] keys' values.
type SequencePlace struct {
	BV          []float64 `json:"b_v"`
	Mag         []float64 `json:"mag"`
	MaxLastMove float64   `json:"max_last_move_mag"`
	Columns     int       `json:"columns_measured"`
	OfColumns   int       `json:"columns"`
}

// Line is the summary's line for the measured shift.
func (p *SequencePlace) Line() string {
	if p == nil || len(p.Mag) == 0 {
		return ""
	}
	lo, hi := p.Mag[0], p.Mag[0]
	for _, m := range p.Mag {
		lo, hi = min(lo, m), max(hi, m)
	}
	return fmt.Sprintf("main sequence measured against the relation table (compare.measure_sequence): moved %+.3f to %+.3f mag in M_V (> 0 fainter) over B−V %.3f–%.3f, %d of %d color columns measured, the last round moving ≤ %.3f mag (spinpop sequence prints it column by column)",
		lo, hi, p.BV[0], p.BV[len(p.BV)-1], p.Columns, p.OfColumns, p.MaxLastMove)
}

// DataSummary describes the catalog as read.
func (c *Comparison) DataSummary() DataSummary {
	return DataSummary{
		File: c.DataFile, SHA256: c.Observed.SHA256, Rows: c.Observed.Rows, Compared: c.Observed.N, Unusable: c.Observed.Rejected, CutAway: c.Observed.CutAway,
		LeftOut:   c.Observed.Rows - c.Observed.N,
		Templates: c.TemplateFile, TplReused: c.TemplatesReused, TplStars: c.Templates.StarsDrawn, AgeBins: c.Templates.NumAgeBins(),
		SpaceBins: c.Space.NumColorPeriod(), SetupSecs: c.SetupSeconds, ScenarioSH: c.Resolved.Hash(), Dropped: c.DroppedStars,
		Masked: c.MaskedStars, MaskAgeGyr: c.Scenario.Compare.MaskAgeGyr, OtherOut: c.OtherStars,
		ColorReach: c.ColorReach, BlueMasked: c.BlueStars,
		BurstBins: burstAgeBins(c.Built.AgeEdgesGyr, c.Scenario.Compare.Free, c.Scenario.Compare.BurstPart),
		Sequence:  c.Sequence.place(),
	}
}

// SplitAge is the age whose gyrochrone splits young from old stars: the
// caller's choice (flag > 0), else compare.split_age_gyr, else the fitted
// burst age, else 0.6 Gyr (the trade's gap; common practice).
func (c *Comparison) SplitAge(flag float64, burst compare.FitResult) float64 {
	if flag > 0 {
		return flag
	}
	if c.Scenario.Compare.SplitAgeGyr > 0 {
		return c.Scenario.Compare.SplitAgeGyr
	}
	for i, n := range burst.Names {
		if n == c.Scenario.Compare.BurstPart+".age_gyr" {
			return burst.Theta[i]
		}
	}
	return 0.6
}

// HeightCheck compares the young fraction against |z| with the two fitted
// hypotheses of the burst test.
func (c *Comparison) HeightCheck(split float64, smooth, burst compare.FitResult) (*compare.HeightResult, error) {
	return compare.HeightCheckFits(c.Templates, c.Observed, split, c.GyrochroneAt(split), map[string]compare.Prediction{
		"smooth history (fit)": compare.PredictionOf(smooth, c.Templates),
		"with burst (fit)":     compare.PredictionOf(burst, c.Templates),
	}, c.perColor())
}

// perColor reports a likelihood conditional on color.
func (c *Comparison) perColor() bool {
	n := c.Likelihood.Options().Normalisation
	return n == compare.NormPerColor || n == compare.NormPerColorHeight
}

// Fit fits a hypothesis with the scenario's seed, with the nuisance
// parameters when there are any (starting from nuStart, nil for their
// scenario values).
func (c *Comparison) Fit(ctx context.Context, m compare.HistoryModel, nuStart []float64) (compare.FitResult, error) {
	return compare.FitJoint(ctx, c.Likelihood, m, c.Nuisance, compare.FitOptions{Seed: c.Scenario.Run.Seed, NuisanceStart: nuStart, MaxRounds: c.MaxRounds, Workers: c.Workers, Stage: c.Stage})
}

// setNuisance makes the comparison's nuisance model: the template run's
// bank re-observed through the scenario with the nuisance keys set
// (assemble.ObservingPopulation), and templates re-observed at the
// scenario's values as the starting templates.
func (c *Comparison) setNuisance(ctx context.Context, params []compare.NuisanceParam, key string) error {
	scen := *c.Scenario
	base := c.Built.Population
	at := func(values []float64) (*scenarios.Scenario, error) {
		s2 := scen
		for j, p := range params {
			if !scenarios.SetAt(&s2, p.Name, values[j]) {
				return nil, fmt.Errorf("nuisance parameter %s is not a number key of the scenario", p.Name)
			}
		}
		return &s2, nil
	}
	obs := &compare.BankObserver{
		Bank: c.Templates.Bank, Space: c.Space, AgeEdgesGyr: c.Built.AgeEdgesGyr,
		BaseFractionScale: scen.Stars.BinaryFractionScale, Workers: c.Workers, Mask: c.Mask,
		Apply: func(values []float64) (*model.Population, error) {
			s2, err := at(values)
			if err != nil {
				return nil, err
			}
			return assemble.ObservingPopulation(s2, base)
		}}
	// The search loss's nodes and shares, and the parameters that only
	// re-weight stars: their derivatives come with the templates.
	for j, p := range params {
		if scenarios.IsSearchNodePath(p.Name) {
			if obs.SearchParams == nil {
				obs.SearchParams = make([]bool, len(params))
			}
			obs.SearchParams[j] = true
		}
		if w, ok := assemble.WeightParamOf(p.Name); ok {
			if obs.Weights == nil {
				obs.Weights = map[int]model.WeightParam{}
			}
			obs.Weights[j] = w
		}
	}
	obs.Depth = make([]int, len(params))
	for j, p := range params {
		obs.Depth[j] = scenarios.ObservationDepth(p.Name)
	}
	obs.SearchGradient = func(values []float64, j int) ([]float64, error) {
		s2, err := at(values)
		if err != nil {
			return nil, err
		}
		g, ok := scenarios.SearchGradient(s2, params[j].Name)
		if !ok {
			return nil, fmt.Errorf("nuisance parameter %s sets no node of the search loss", params[j].Name)
		}
		return g, nil
	}
	for _, p := range params {
		if scenarios.IsPlacementPath(p.Name) {
			// The disk's heating moves stars in height: the stored stars
			// are re-weighted by the ratio of vertical densities.
			edges := c.Built.AgeEdgesGyr
			obs.Reweight = func(values []float64) (func(int, float64) float64, error) {
				s2, err := at(values)
				if err != nil {
					return nil, err
				}
				return assemble.HeatingWeight(&scen, s2, edges)
			}
			break
		}
	}
	c.Nuisance = &compare.Nuisance{Params: params, Source: obs}
	nominal, err := c.Nuisance.Templates(ctx, c.Nuisance.Nominal())
	if err != nil {
		return InputError{fmt.Errorf("%s: %w", c.Source, err)}
	}
	nominal.Key = key
	c.Templates = nominal
	return nil
}
