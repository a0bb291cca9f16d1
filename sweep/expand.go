package sweep

import (
	"encoding/json"
	"fmt"
	"os"
	"runtime"
	"sync"

	"spinpop/scenarios"
)

// Len is the number of points.
func (s *Sweep) Len() int { return s.n }

// choice returns, for point i, the value index of each axis: groups are
// crossed like nested loops, the last group varying fastest.
func (s *Sweep) choice(i int) []int {
	idx := make([]int, len(s.Axes))
	for g := len(s.groups) - 1; g >= 0; g-- {
		j := i % s.sizes[g]
		i /= s.sizes[g]
		for _, a := range s.groups[g] {
			idx[a] = j
		}
	}
	return idx
}

// Values returns point i's value of each axis, in axis order.
func (s *Sweep) Values(i int) []any {
	idx := s.choice(i)
	out := make([]any, len(idx))
	for a, j := range idx {
		out[a] = s.Axes[a].Values[j]
	}
	return out
}

// Point is one point of a sweep: the base scenario with [set] and one
// value per axis applied.
type Point struct {
	Index    int
	Values   []any // one per axis, in the sweep's axis order
	Scenario *scenarios.Resolved
	Hash     string // the scenario's canonical hash: the point's identity and folder name

	base      *scenarios.Base
	overrides []scenarios.Override
}

// With resolves the point's scenario with more overrides after its own
// (an alternative's, scenarios.AlternativeOverrides), exactly as a file
// that extends the point's scenario would.
func (p *Point) With(extra ...scenarios.Override) (*scenarios.Resolved, error) {
	ov := append(append([]scenarios.Override{}, p.overrides...), extra...)
	return p.base.Resolve(ov...)
}

// Point resolves point i. Its errors are the scenario's, labelled with the
// sweep file, the axis line and the value.
func (s *Sweep) Point(i int) (*Point, error) {
	if i < 0 || i >= s.n {
		return nil, fmt.Errorf("sweep %s has points 0 to %d, not %d", s.File, s.n-1, i)
	}
	idx := s.choice(i)
	ov := make([]scenarios.Override, 0, len(s.set)+len(idx))
	ov = append(ov, s.set...)
	vals := make([]any, len(idx))
	for a, j := range idx {
		ov = append(ov, s.Axes[a].overrides[j])
		vals[a] = s.Axes[a].Values[j]
	}
	res, err := s.base.Resolve(ov...)
	if err != nil {
		return nil, err
	}
	return &Point{Index: i, Values: vals, Scenario: res, Hash: res.Hash(), base: s.base, overrides: ov}, nil
}

// Plan is the list of a sweep's points with their hashes: what a dry run
// prints, and what the runner, the Slurm tasks and the merge work from.
type Plan struct {
	Sweep    string      `json:"sweep"`
	Name     string      `json:"name"`
	Scenario string      `json:"scenario"`
	Work     []string    `json:"work"`
	Axes     []string    `json:"axes"`
	Points   []PlanPoint `json:"points"`
}

// PlanPoint is one point of a plan.
type PlanPoint struct {
	Index  int    `json:"index"`
	Hash   string `json:"hash"`
	Values []any  `json:"values"`
}

// Plan resolves every point on workers goroutines (0: one per thread),
// checking each scenario like a file, and lists them. Problems are
// reported together (each distinct message once, with the first point it
// hit). Two points that resolve to the same scenario are an error: an
// axis repeats a value.
func (s *Sweep) Plan(workers int) (*Plan, error) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	plan := &Plan{Sweep: s.File, Name: s.Name, Scenario: s.Scenario, Work: s.Work, Points: make([]PlanPoint, s.n)}
	for _, a := range s.Axes {
		plan.Axes = append(plan.Axes, a.Key)
	}
	errs := make([]error, s.n)
	var wg sync.WaitGroup
	next := make(chan int, workers)
	for range workers {
		wg.Go(func() {
			for i := range next {
				p, err := s.Point(i)
				if err != nil {
					errs[i] = err
					continue
				}
				plan.Points[i] = PlanPoint{Index: i, Hash: p.Hash, Values: p.Values}
			}
		})
	}
	for i := range s.n {
		next <- i
	}
	close(next)
	wg.Wait()

	var out scenarios.ValidationErrors
	seenMsg := map[string]bool{}
	for i, err := range errs {
		if err == nil {
			continue
		}
		var list scenarios.ValidationErrors
		if v, ok := err.(scenarios.ValidationErrors); ok {
			list = v
		} else {
			list = scenarios.ValidationErrors{{File: s.File, Msg: err.Error()}}
		}
		for _, e := range list {
			if seenMsg[e.Error()] {
				continue
			}
			seenMsg[e.Error()] = true
			c := *e
			c.Msg += fmt.Sprintf(" (first at point %d)", i)
			out = append(out, &c)
			if len(out) >= 50 {
				return nil, out
			}
		}
	}
	if len(out) > 0 {
		return nil, out
	}
	byHash := make(map[string]int, s.n)
	for _, p := range plan.Points {
		if j, dup := byHash[p.Hash]; dup {
			return nil, scenarios.ValidationErrors{{File: s.File, Line: s.lines("axis"),
				Msg: fmt.Sprintf("points %d (%s) and %d (%s) are the same scenario (hash %.12s…); an axis repeats a value or a key has no effect",
					j, describeValues(plan.Axes, plan.Points[j].Values), p.Index, describeValues(plan.Axes, p.Values), p.Hash)}}
		}
		byHash[p.Hash] = p.Index
	}
	return plan, nil
}

func describeValues(keys []string, vals []any) string {
	if len(keys) == 0 {
		return "the base"
	}
	s := ""
	for i, k := range keys {
		if i > 0 {
			s += ", "
		}
		s += k + " = " + ValueText(vals[i])
	}
	return s
}

// WritePlan writes the plan to path as JSON, whole or not at all.
func WritePlan(path string, p *Plan) error {
	b, err := json.MarshalIndent(p, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(path, append(b, '\n'))
}

// ReadPlan reads a plan written by WritePlan.
func ReadPlan(path string) (*Plan, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var p Plan
	if err := json.Unmarshal(b, &p); err != nil {
		return nil, fmt.Errorf("%s: not a sweep plan: %w", path, err)
	}
	return &p, nil
}
