package scenarios

import (
	"fmt"
	"io/fs"
	"reflect"
	"strconv"
	"strings"

	"spinpop/internal/regular"
)

// The [data] section names an observed catalog. Loading a scenario checks
// the section and resolves the file's path but never opens the file: a
// scenario that only simulates, or that is being checked before its data
// exist, must load all the same. Reading the catalog is the compare
// package's job; OpenData and CheckDataSHA256 are the two places where a
// scenario's view of its data meets the file.

// dataFormats are the allowed values of data.format.
var dataFormats = []string{"auto", "csv", "ecsv", "fits", "parquet"}

// fillData normalises data.sha256 to lower case, so that a checksum
// copied in capitals hashes like the same checksum in small letters.
func (d *decoder) fillData(dt *Data) {
	if isHexSHA256(dt.SHA256) {
		dt.SHA256 = strings.ToLower(dt.SHA256)
	}
}

// validateData checks [data]. The column rule is the catalog reader's
// (compare/catalog Mapping.Validate): each star needs a period, a color,
// an absolute magnitude (abs_mag_v, or app_mag_v and parallax_mas) and a
// height above the plane (z_pc, or parallax_mas and a sky position), so
// that a scenario that loads never fails on its mapping when its data are
// read.
func (v *decoder) validateData(dt *Data) {
	v.oneOf("data.format", dt.Format, dataFormats)
	if dt.SHA256 != "" && !isHexSHA256(dt.SHA256) && !v.errs.isBad("data.sha256") {
		s := dt.SHA256
		if len(s) > 80 {
			s = s[:80] + "..."
		}
		v.errAt("data.sha256", "data.sha256 = %s is not a SHA-256 checksum (%d characters); give its 64 hexadecimal digits, as sha256sum prints them, or leave it empty", quoteString(s), len(dt.SHA256))
	}
	if v.errs.isBad("data.file") {
		return
	}
	v.validateExtension(dt)
	if dt.File == "" {
		if dt.SHA256 != "" && !v.errs.isBad("data.sha256") {
			v.errAt("data.sha256", "data.sha256 is set but data.file is empty; the checksum belongs to a data file, so name the file or remove the checksum")
		}
		if dt.Extension != "" && !v.errs.isBad("data.extension") {
			v.errAt("data.extension", "data.extension is set but data.file is empty; the extension belongs to a FITS file, so name the file or remove the extension")
		}
		return
	}
	v.validateColumns(&dt.Columns)
}

// validateExtension checks data.extension: a FITS extension's name or
// number, meaningless for the other formats.
func (v *decoder) validateExtension(dt *Data) {
	const p = "data.extension"
	if dt.Extension == "" || v.errs.isBad(p) {
		return
	}
	switch dt.Format {
	case "csv", "ecsv", "parquet":
		v.errAt(p, "data.extension = %s chooses a FITS extension, but data.format = %s; remove data.extension or set data.format = \"fits\" (or \"auto\")", quoteString(dt.Extension), quoteString(dt.Format))
		return
	}
	if n, err := strconv.Atoi(strings.TrimSpace(dt.Extension)); err == nil && n < 1 {
		v.errAt(p, "data.extension = %s: extensions are numbered from 1 (the first after the primary HDU), or named by their EXTNAME", quoteString(dt.Extension))
	}
	if strings.TrimSpace(dt.Extension) == "" {
		v.errAt(p, "data.extension is blank; give the extension's EXTNAME or number, or remove the key")
	}
}

// validateColumns checks that the columns named can give every quantity a
// comparison needs, and that no column is named twice.
func (v *decoder) validateColumns(c *DataColumns) {
	const p = "data.columns"
	if v.errs.isBad(p) {
		return
	}
	for _, k := range []struct{ key, col, what string }{
		{"period_d", c.PeriodD, "the rotation period"},
		{"b_v", c.BV, "the B-V color"},
	} {
		if kp := joinKey(p, k.key); k.col == "" && !v.errs.isBad(kp) {
			v.errAt(kp, "%s is empty; with data.file set, name the column that holds %s", kp, k.what)
		}
	}
	pairOK := true
	for _, pair := range [][2]string{{"ra_deg", "dec_deg"}, {"l_deg", "b_deg"}} {
		a, b := columnOf(c, pair[0]), columnOf(c, pair[1])
		if (a == "") != (b == "") {
			pairOK = false
			given, missing := pair[0], pair[1]
			if a == "" {
				given, missing = missing, given
			}
			v.errAt(joinKey(p, given), "%s.%s is set but %s.%s is not; a sky position needs both %s and %s", p, given, p, missing, pair[0], pair[1])
		}
	}
	if !pairOK {
		return
	}
	hasPos := c.RADeg != "" || c.LDeg != ""
	var lacks []string
	if c.AbsMagV == "" && (c.AppMagV == "" || c.ParallaxMas == "") {
		miss := missingOf(c, "app_mag_v", "parallax_mas")
		lacks = append(lacks, fmt.Sprintf("the absolute magnitude: name abs_mag_v, or app_mag_v and parallax_mas to derive it (missing: abs_mag_v, or %s)", strings.Join(miss, " and ")))
	}
	if c.HeightPc == "" && (c.ParallaxMas == "" || !hasPos) {
		miss := missingOf(c, "parallax_mas")
		if !hasPos {
			miss = append(miss, "ra_deg and dec_deg (or l_deg and b_deg)")
		}
		lacks = append(lacks, fmt.Sprintf("the height above the plane: name z_pc, or parallax_mas and a sky position (ra_deg and dec_deg, or l_deg and b_deg) to derive it (missing: z_pc, or %s)", strings.Join(miss, " and ")))
	}
	if len(lacks) > 0 {
		v.errVia(p, v.blameColumns(), "%s cannot give %s", p, strings.Join(lacks, "; nor "))
	}
	seen := make(map[string]string)
	for _, k := range fieldsOf(dataColumnsType).names {
		col := columnOf(c, k)
		if col == "" {
			continue
		}
		if other, dup := seen[col]; dup {
			kp := joinKey(p, k)
			v.errAt(kp, "%s = %s names the same column as %s.%s; each quantity needs its own column", kp, quoteString(col), p, other)
			continue
		}
		seen[col] = k
	}
}

// blameColumns is the key whose place a problem with the columns as a
// whole is reported at: the user's [data.columns] table if there is one,
// else data.file, since naming the file is what made the columns matter.
func (v *decoder) blameColumns() string {
	if v.origins["data.columns"].file != "" {
		return "data.columns"
	}
	return "data.file"
}

var dataColumnsType = reflect.TypeFor[DataColumns]()

// columnOf returns the column named for key k of DataColumns.
func columnOf(c *DataColumns, k string) string {
	i, ok := fieldsOf(dataColumnsType).index[k]
	if !ok {
		return ""
	}
	return reflect.ValueOf(c).Elem().Field(i).String()
}

// missingOf lists the keys among keys that name no column.
func missingOf(c *DataColumns, keys ...string) []string {
	var out []string
	for _, k := range keys {
		if columnOf(c, k) == "" {
			out = append(out, k)
		}
	}
	return out
}

func isHexSHA256(s string) bool {
	if len(s) != 64 {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F') {
			return false
		}
	}
	return true
}

// errVia records a problem with key p, blamed on the place where key via
// (or its nearest ancestor) was set.
func (d *decoder) errVia(p, via, format string, args ...any) {
	o := d.locate(via)
	if o.file == "" {
		o = origin{file: d.top}
	}
	d.errs.add(&Error{File: o.file, Line: o.line, Key: p, Msg: fmt.Sprintf(format, args...)})
}

// resolveData finds the data file relative to the scenario file that set
// data.file, in the same file system as the scenario when it came from
// one. A scenario given as bytes without a file system resolves it in the
// operating system's, relative to the name it was given under.
func (d *decoder) resolveData(file string, src source) (dataPath string, dataFS fs.FS, at origin) {
	if file == "" || d.errs.isBad("data.file") {
		return "", nil, origin{}
	}
	at = d.locate("data.file")
	from := at.file
	if from == "" {
		from = d.top
	}
	dataPath, dataFS, err := src.locateData(from, file)
	if err != nil {
		d.errAt("data.file", "data.file = %s: %s", quoteString(file), errText(err))
		return "", nil, origin{}
	}
	return dataPath, dataFS, at
}

// OpenData opens the observed catalog the scenario names: DataPath in
// DataFS, or in the operating system's file system when DataFS is nil.
// The file is not checked against data.sha256 here; the catalog reader
// hashes what it reads, and CheckDataSHA256 compares the result.
func (r *Resolved) OpenData() (fs.File, error) {
	if r.DataPath == "" {
		return nil, &Error{File: r.top(), Key: "data.file",
			Msg: "the scenario names no observed catalog; add [data] file = \"catalog.csv\" (a path relative to the scenario file) and its columns"}
	}
	var f fs.File
	var err error
	if r.DataFS != nil {
		f, err = r.DataFS.Open(r.DataPath)
	} else {
		f, err = regular.Open(r.DataPath) // a FIFO would block for ever
	}
	if err != nil {
		return nil, &Error{File: r.dataAt.file, Line: r.dataAt.line, Key: "data.file", Err: err,
			Msg: fmt.Sprintf("data.file = %s: cannot open %s: %s", quoteString(r.Scenario.Data.File), r.DataPath, errText(err))}
	}
	return f, nil
}

// CheckDataSHA256 compares the hex SHA-256 of the catalog as read (for
// instance compare/catalog's Summary.SHA256Hex) with data.sha256. It
// returns nil when they agree or when the scenario states no checksum.
func (r *Resolved) CheckDataSHA256(gotHex string) error {
	want := r.Scenario.Data.SHA256
	if want == "" || strings.EqualFold(want, gotHex) {
		return nil
	}
	return &Error{File: r.shaAt.file, Line: r.shaAt.line, Key: "data.sha256",
		Msg: fmt.Sprintf("%s has SHA-256 %s, but data.sha256 = %s: this is not the file the scenario was written for; if it is the intended new version, set data.sha256 = %s",
			r.DataPath, strings.ToLower(gotHex), want, quoteString(strings.ToLower(gotHex)))}
}

// top is the loaded file, for messages without a better place.
func (r *Resolved) top() string {
	if len(r.Files) == 0 {
		return ""
	}
	return r.Files[len(r.Files)-1]
}
