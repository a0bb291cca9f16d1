package pipeline

import (
	"spinpop/model"
	"spinpop/tablewrite"
)

// CatalogTableColumns are the catalog's columns (model.CatalogColumns) as
// tablewrite describes them: numbers as float64 with their units, whole
// numbers (identifiers) as int64, flags as booleans, words as strings.
func CatalogTableColumns() []tablewrite.Column {
	cols := model.CatalogColumns()
	out := make([]tablewrite.Column, len(cols))
	for i, c := range cols {
		switch {
		case c.IsWords():
			out[i] = tablewrite.Column{Name: c.Name, Kind: tablewrite.String, Width: len("double")}
		case c.Flag != 0:
			out[i] = tablewrite.Column{Name: c.Name, Kind: tablewrite.Bool}
		case c.Integer:
			out[i] = tablewrite.Column{Name: c.Name, Unit: c.Unit, Kind: tablewrite.Int64}
		default:
			out[i] = tablewrite.Column{Name: c.Name, Unit: c.Unit, Kind: tablewrite.Float64}
		}
	}
	return out
}

// TableCatalog writes catalog stars through a tablewrite.Writer (CSV,
// FITS or Parquet) made with CatalogTableColumns, column by column from
// the same table as CatalogWriter; its CSV is CatalogWriter's byte for
// byte.
type TableCatalog struct {
	w    tablewrite.Writer
	cols []model.Column
}

// NewTableCatalog writes through w, whose columns are CatalogTableColumns.
func NewTableCatalog(w tablewrite.Writer) *TableCatalog {
	return &TableCatalog{w: w, cols: model.CatalogColumns()}
}

// Add writes the catalog stars of chunk c (those whose flags say
// Selected), in chunk order.
func (t *TableCatalog) Add(c *model.Chunk) error {
	for i := 0; i < c.N; i++ {
		f := c.Flags[i]
		if !f.Selected() {
			continue
		}
		for j := range t.cols {
			col := &t.cols[j]
			switch {
			case col.IsWords():
				t.w.SetString(j, col.Words(f))
			case col.Flag != 0:
				t.w.SetBool(j, f&col.Flag != 0)
			case col.Integer:
				t.w.SetInt64(j, int64(col.Float(c, i)))
			default:
				t.w.SetFloat64(j, col.Float(c, i))
			}
		}
		if err := t.w.WriteRow(); err != nil {
			return err
		}
	}
	return nil
}
