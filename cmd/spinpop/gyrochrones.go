package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"

	"spinpop/pipeline"
)

func runGyrochrones(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("gyrochrones", "gyrochrones SCENARIO [--ages-gyr 0.3,0.6,1,2,4] [--csv] [--points N]",
		"Tabulate rotation period against B−V (and mass) at the given ages for the scenario's spin-down\n"+
			"law: the curves to overlay on a period–color plot. For the torque law the curve follows the\n"+
			"star that started at the median initial period. Periods outside a law's calibrated range\n"+
			"are left empty.", stdout)
	ages := fs.String("ages-gyr", "", "comma-separated ages in Gyr (default: the scenario's output.gyrochrone_ages_gyr)")
	asCSV := fs.Bool("csv", false, "print CSV (age_gyr,b_v_mag,mass_msun,period_d) instead of a table")
	points := fs.Int("points", 23, "colors per gyrochrone, spread over the scenario's B−V cut")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "gyrochrones")
	if err != nil {
		return err
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	s := &res.Scenario
	agesGyr := s.Output.GyrochroneAgesGyr
	if *ages != "" {
		if agesGyr, err = floatList(*ages, "ages-gyr"); err != nil {
			return err
		}
	}
	for _, a := range agesGyr {
		if !(a > 0) || a > 14 {
			return usageErrorf("--ages-gyr: %g is not an age in (0, 14] Gyr", a)
		}
	}
	if *points < 2 || *points > 10000 {
		return usageErrorf("--points must be between 2 and 10000")
	}
	curves, law, err := pipeline.Gyrochrones(s, path, agesGyr, *points)
	if err != nil {
		return err
	}
	if *asCSV {
		w := csv.NewWriter(stdout)
		w.Write([]string{"age_gyr", "b_v_mag", "mass_msun", "period_d"})
		for _, g := range curves {
			for i := range g.BV {
				p := ""
				if !math.IsNaN(g.PeriodD[i]) {
					p = strconv.FormatFloat(g.PeriodD[i], 'f', 3, 64)
				}
				w.Write([]string{strconv.FormatFloat(g.AgeGyr, 'g', -1, 64), strconv.FormatFloat(g.BV[i], 'f', 4, 64),
					strconv.FormatFloat(g.MassMsun[i], 'f', 4, 64), p})
			}
		}
		w.Flush()
		return w.Error()
	}
	fmt.Fprintf(stdout, "# spin-down law %s; period in days\n", law.Name())
	fmt.Fprintf(stdout, "%7s %7s", "B-V", "M/Msun")
	for _, g := range curves {
		fmt.Fprintf(stdout, " %9s", strconv.FormatFloat(g.AgeGyr, 'g', -1, 64)+" Gyr")
	}
	fmt.Fprintln(stdout)
	if len(curves) == 0 {
		return nil
	}
	for i := range curves[0].BV {
		fmt.Fprintf(stdout, "%7.3f %7.3f", curves[0].BV[i], curves[0].MassMsun[i])
		for _, g := range curves {
			if math.IsNaN(g.PeriodD[i]) {
				fmt.Fprintf(stdout, " %9s", "—")
			} else {
				fmt.Fprintf(stdout, " %9.2f", g.PeriodD[i])
			}
		}
		fmt.Fprintln(stdout)
	}
	return nil
}
