package pipeline

import (
	"context"
	"fmt"
	"slices"

	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// LawVariant is one spin-down prescription to compare.
type LawVariant struct {
	Label string
	Law   string   // the law's scenario name (spin.law)
	On    []string // switchable option tables this variant turns on; none for the law plain
	Set   func(s *scenarios.Scenario)
}

// LawVariants are the prescriptions the laws comparison shows: every
// registered law, in registration order, in each of its variants (see
// spin.LawSpec), with the switchable options of every law off unless the
// variant turns them on.
func LawVariants() []LawVariant {
	var out []LawVariant
	for _, spec := range spin.Laws() {
		variants := spec.Variants
		if len(variants) == 0 {
			variants = []spin.Variant{{Label: spec.Label}}
		}
		for _, v := range variants {
			name, on := spec.Name, v.On
			out = append(out, LawVariant{v.Label, name, on, func(s *scenarios.Scenario) {
				s.Spin.Law = name
				s.Spin.Options = s.Spin.Options.Clone()
				tables, _ := spin.OptionTables()
				for _, t := range tables {
					if t.Switch != "" {
						s.Spin.Options.Set(t.Name, t.Switch, slices.Contains(on, t.Name))
					}
				}
			}})
		}
	}
	return out
}

// LawRun is the scenario's population observed under one law variant.
type LawRun struct {
	Label       string
	Law         string   // the law's scenario name
	On          []string // switchable option tables turned on
	Tally       *model.Tally
	Gyrochrones []model.Gyrochrone
}

// CompareLaws observes the scenario's population under each law variant
// in turn, with the same seed, so masses, ages and positions are the same
// stars. stars > 0 replaces run.stars_generated. progress, if set, is
// called with each variant's label before it runs and returns the
// variant's progress function.
func CompareLaws(ctx context.Context, res *scenarios.Resolved, source string, stars int64, workers int,
	progress func(label string, total int64) (update func(done int64), finish func())) ([]LawRun, error) {
	var out []LawRun
	for _, v := range LawVariants() {
		s := res.Scenario // a copy: each variant starts from the scenario as given
		v.Set(&s)
		if stars > 0 {
			s.Run.StarsGenerated = stars
		}
		built, err := Build(&s, fmt.Sprintf("%s (%s)", source, v.Label))
		if err != nil {
			return nil, err
		}
		ce, pe, ze := TallyEdges(&s)
		t := model.NewTally(built.AgeEdgesGyr, ce, pe, ze)
		update, finish := func(int64) {}, func() {}
		if progress != nil {
			update, finish = progress(v.Label, s.Run.StarsGenerated)
		}
		var done int64
		err = model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, workers, built.Population.Fill,
			func(c *model.Chunk) error {
				t.Add(c)
				done += int64(c.N)
				update(done)
				return nil
			})
		finish()
		if err != nil {
			return nil, err
		}
		out = append(out, LawRun{Label: v.Label, Law: v.Law, On: v.On, Tally: t,
			Gyrochrones: model.Gyrochrones(built.Law, built.Relations, s.Output.GyrochroneAgesGyr, s.Cuts.BVMin, s.Cuts.BVMax, 50)})
	}
	return out, nil
}
