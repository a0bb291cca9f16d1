// Package sweep runs one scenario many times over: a sweep file names a
// base scenario, axes of values for scenario keys (lists, numeric ranges,
// every choice of a named key, seeds; crossed, or zipped to vary together),
// and the work to do at each point. A sweep expands into points, each a
// fully resolved scenario with its canonical hash; runs them locally on a
// worker pool or as a Slurm job array, one folder per point named by its
// hash, restartable; and merges the points' headline numbers into one table
// (CSV and JSON).
//
// The work itself is injected (Worker), so that the package knows nothing
// of simulation or statistics: the command-line program plugs in the
// workflow.
//
// Layout of an output folder:
//
//	plan.json                 the points: index, hash, axis values
//	points/<hash>/point.json  the point (written before its work starts)
//	points/<hash>/scenario.toml  its resolved scenario, canonical form
//	points/<hash>/out/        what the work wrote (emptied before each attempt)
//	points/<hash>/result.json the completion marker and headline numbers
//	points/<hash>/failed.json written instead when the work failed
//	results.csv, results.json the merged table
//	slurm/                    job scripts, point lists and task logs
package sweep
