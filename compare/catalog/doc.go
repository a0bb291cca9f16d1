// Package catalog reads observed rotation-period catalogs: plain CSV and
// ECSV, the astronomy community's self-describing text table (a YAML header
// in comment lines, then delimited values), both optionally
// gzip-compressed; binary tables in FITS files (gzip-compressed or not,
// through spinpop/fitstable); and Parquet files (through
// spinpop/parquettable). The format is taken from the content (Options.
// Format may declare it, and then the content must agree). Rows are
// streamed to a callback one at a time, so a catalog of millions of stars
// is never held in memory: text and FITS are read in one pass, Parquet one
// row group, and of it only the mapped columns, at a time.
//
// Units are checked wherever the file states them: ECSV "unit", FITS
// TUNITn, and the "units" metadata of Parquet files written by
// parquettable.
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
