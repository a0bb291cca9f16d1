package catalog

import (
	"encoding/csv"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
)

// angSepDeg is the great-circle distance between two (lon, lat) points.
func angSepDeg(l1, b1, l2, b2 float64) float64 {
	r := math.Pi / 180
	// Haversine form, accurate for small angles.
	h := math.Pow(math.Sin((b2-b1)*r/2), 2) + math.Cos(b1*r)*math.Cos(b2*r)*math.Pow(math.Sin((l2-l1)*r/2), 2)
	return 2 * math.Asin(math.Sqrt(h)) / r
}

func readCSVRecords(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	require.NoError(t, err)
	return recs[1:] // drop the column names
}
