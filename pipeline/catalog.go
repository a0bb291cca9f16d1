package pipeline

import (
	"bufio"
	"io"
	"math"
	"strconv"

	"spinpop/model"
)

// CatalogWriter streams catalog stars as CSV: a header of column names
// (units in the names), then one row per catalog star. The columns are
// model.CatalogColumns, so a column added there appears here. Rows are
// formatted by hand with strconv (encoding/csv plus fmt would dominate the
// run time of a large catalog).
type CatalogWriter struct {
	w    *bufio.Writer
	cols []model.Column
	buf  []byte
	rows int64
}

// NewCatalogWriter writes the header to w and returns the writer.
func NewCatalogWriter(w io.Writer) *CatalogWriter {
	cw := &CatalogWriter{w: bufio.NewWriterSize(w, 1<<20), cols: model.CatalogColumns()}
	for i, c := range cw.cols {
		if i > 0 {
			cw.w.WriteByte(',')
		}
		cw.w.WriteString(c.Name)
	}
	cw.w.WriteByte('\n')
	return cw
}

// Add writes the catalog stars of chunk c (those whose flags say
// Selected), in chunk order.
func (cw *CatalogWriter) Add(c *model.Chunk) error {
	for i := 0; i < c.N; i++ {
		if !c.Flags[i].Selected() {
			continue
		}
		b := cw.buf[:0]
		for j := range cw.cols {
			col := &cw.cols[j]
			if j > 0 {
				b = append(b, ',')
			}
			switch {
			case col.IsWords():
				b = append(b, col.Words(c.Flags[i])...)
			case col.Flag != 0:
				if c.Flags[i]&col.Flag != 0 {
					b = append(b, '1')
				} else {
					b = append(b, '0')
				}
			case col.Integer:
				b = strconv.AppendInt(b, int64(col.Float(c, i)), 10)
			default:
				b = appendFloat(b, col.Float(c, i))
			}
		}
		b = append(b, '\n')
		cw.buf = b
		if _, err := cw.w.Write(b); err != nil {
			return err
		}
		cw.rows++
	}
	return nil
}

// Rows is the number of rows written so far.
func (cw *CatalogWriter) Rows() int64 { return cw.rows }

// Flush writes out what is buffered.
func (cw *CatalogWriter) Flush() error { return cw.w.Flush() }

// appendFloat writes x with 6 significant digits: far below any measurement
// error in the catalog, and a third of the bytes of a full round trip.
func appendFloat(b []byte, x float64) []byte {
	if math.IsNaN(x) {
		return append(b, "nan"...)
	}
	return strconv.AppendFloat(b, x, 'g', 6, 64)
}
