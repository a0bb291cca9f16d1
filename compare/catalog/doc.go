// Package catalog reads observed rotation-period catalogs: plain CSV
// (optionally gzip-compressed) and ECSV, the astronomy community's
// self-describing text table (a YAML header in comment lines, then
// delimited values). Rows are streamed to a callback one at a time, so a
// catalog of millions of stars is never held in memory.
//
// A Mapping names the catalog's columns for the quantities the model
// compares: rotation period, a color, and either absolute magnitude and
// height above the Galactic plane directly, or apparent magnitude,
// parallax and sky position from which they are derived. Rows that cannot
// be used are never dropped silently: each is counted by reason in the
// Summary and handed to a RejectSink with its line number.
//
// The SHA-256 of the file's bytes is computed while reading, so a caller
// can check that the catalog is the one a scenario names.
package catalog
