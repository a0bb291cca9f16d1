// Package testref holds what tests that compare against reference tables
// share: reading a reference CSV (made by a script kept beside it) and the
// great-circle distance sky positions are compared by. Only tests import it.
package testref

import (
	"encoding/csv"
	"math"
	"os"
	"testing"
)

// AngSepDeg is the great-circle distance in degrees between two
// (longitude, latitude) points, by the haversine form (accurate for small
// angles).
func AngSepDeg(l1, b1, l2, b2 float64) float64 {
	r := math.Pi / 180
	h := math.Pow(math.Sin((b2-b1)*r/2), 2) + math.Cos(b1*r)*math.Cos(b2*r)*math.Pow(math.Sin((l2-l1)*r/2), 2)
	return 2 * math.Asin(math.Sqrt(h)) / r
}

// ReadCSV returns the records of a reference CSV ('#' lines are comments)
// without its row of column names; a file that cannot be read fails t.
func ReadCSV(t testing.TB, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatalf("reference table: %v", err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	if err != nil {
		t.Fatalf("reference table %s: %v", path, err)
	}
	if len(recs) == 0 {
		t.Fatalf("reference table %s is empty", path)
	}
	return recs[1:]
}
