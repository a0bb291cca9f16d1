// Package assemble turns a resolved scenario into the objects a run uses:
// the star-formation history, the spin-down law, the field's line-of-sight
// tables and the population generator (Build), and, for comparisons with an
// observed catalog, the comparison space, the column mapping, the
// likelihood options, the hypotheses of the burst test and the key under
// which templates are cached.
//
// It sits between the scenario format (package scenarios, which reads,
// merges, validates and hashes scenario files and links none of the
// machinery below) and the packages that do the work (sfh, disk, model,
// compare). Tables are built once here and shared read-only by all workers.
package assemble
