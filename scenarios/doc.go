// Package scenarios reads, checks and identifies spinpop's scenario files:
// TOML documents that describe one run, from the star-formation history to
// the survey's cuts. The format itself is the Scenario struct (schema.go);
// the commented examples (Examples, LoadExample) teach it by use.
//
// Loading a scenario goes through these steps, and every problem found on
// the way is reported, all at once, as ValidationErrors naming file, line
// and key:
//
//  1. Parse each file into a generic tree. A file may start from another
//     with extends = "other.toml" (relative to the extending file; chains
//     are allowed, cycles are an error naming the chain).
//  2. Merge, most basic first, over the built-in defaults: tables merge key
//     by key; scalars and arrays replace. A table that sets `kind` (a
//     history part, survey.field) replaces the inherited table of that name
//     wholesale, so no key of the old kind lingers; a history part whose
//     kind is "none" is removed.
//  3. Decode strictly into Scenario: an unknown key is an error that
//     suggests the nearest valid key; a value of the wrong type is an
//     error; keys that do not apply to a part's or field's kind are errors.
//  4. Fill the defaults that depend on other keys (name, cuts.period_min_d,
//     cuts.period_max_d, disk.age_bin_edges_gyr, smooth parts' weight,
//     compare.period_min_d, compare.period_max_d, compare.free and the
//     free parameters' priors).
//  5. Validate ranges and relations between keys.
//  6. Resolve data.file, the observed catalog, relative to the file that
//     set it, like extends: Resolved.DataPath, in Resolved.DataFS when the
//     scenario came from a file system other than the operating system's
//     (the embedded examples, for one). The catalog is not opened: a
//     scenario loads whether its data exist or not; OpenData opens them.
//
// The result, Resolved, has a canonical TOML form (every default written
// out, keys sorted, floats in Go's shortest round-trip format) whose
// SHA-256 identifies the run: layout and comments do not change it, any
// value does. PartHash identifies a subset of sections, for products such
// as templates that depend on only part of a scenario. The canonical form
// keeps data.file as written, not as resolved, so that collaborators'
// copies of a scenario and its data in different directories agree.
//
// Building the physics packages' configurations from a Scenario lives in
// build.go, apart from the format.
package scenarios
