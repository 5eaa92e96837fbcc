package ingest

import (
	"fmt"
	"slices"
	"strings"

	"github.com/parquet-go/parquet-go/format"
)

// maxRowGroupRows is the most rows a row group may hold: the largest row
// group pyarrow wrote by default (64 Mi rows). Every column read is decoded
// a row group at a time, so the limit bounds what one footer can ask for.
const maxRowGroupRows = 1 << 26

// checkParquetFooter checks what a Parquet footer (FileMetaData of
// parquet.thrift, apache/parquet-format) states against the file it ends:
// row counts that add up and stay within maxRowGroupRows, and column
// chunks that lie between the leading magic and the footer, do not overlap,
// belong to their schema column, count one value per row and have its
// physical type. A footer that lies on any of these would have its values
// read from the wrong bytes, or ask for memory it cannot fill.
func checkParquetFooter(md *format.FileMetaData, leaves []*format.SchemaElement, paths [][]string, dataEnd int64) error {
	var rows int64
	type span struct {
		from, to int64
		col      string
	}
	var spans []span
	for g, rg := range md.RowGroups {
		if rg.NumRows < 0 || rg.NumRows > maxRowGroupRows {
			return fmt.Errorf("row group %d: %d rows, beyond the limit of %d", g+1, rg.NumRows, maxRowGroupRows)
		}
		rows += rg.NumRows
		if len(rg.Columns) != len(leaves) {
			return fmt.Errorf("row group %d: %d column chunks for %d columns", g+1, len(rg.Columns), len(leaves))
		}
		for c, ch := range rg.Columns {
			cm := &ch.MetaData
			name := strings.Join(paths[c], ".")
			where := fmt.Sprintf("row group %d: column %q", g+1, name)
			if ch.FilePath != "" {
				return fmt.Errorf("%s: data in another file (%s) is not supported", where, ch.FilePath)
			}
			if !slices.Equal(cm.PathInSchema, paths[c]) {
				return fmt.Errorf("%s: chunk names column %q", where, strings.Join(cm.PathInSchema, "."))
			}
			if cm.Type != leaves[c].Type.V {
				return fmt.Errorf("%s: chunk of type %s, the schema says %s", where, cm.Type, leaves[c].Type.V)
			}
			// num_values counts nulls too, so a flat column has one per row.
			if leaves[c].RepetitionType.V != format.Repeated && cm.NumValues != rg.NumRows {
				return fmt.Errorf("%s: %d values for %d rows", where, cm.NumValues, rg.NumRows)
			}
			from := cm.DataPageOffset
			if cm.DictionaryPageOffset > 0 {
				from = min(from, cm.DictionaryPageOffset)
			}
			to := from + cm.TotalCompressedSize
			if from < 4 || cm.TotalCompressedSize <= 0 || to < from || to > dataEnd {
				return fmt.Errorf("%s: chunk at bytes %d to %d, outside the data (4 to %d)", where, from, to, dataEnd)
			}
			spans = append(spans, span{from, to, where})
		}
	}
	if rows != md.NumRows {
		return fmt.Errorf("footer states %d rows, its row groups hold %d", md.NumRows, rows)
	}
	slices.SortFunc(spans, func(a, b span) int { return int(min(max(a.from-b.from, -1), 1)) })
	for i := 1; i < len(spans); i++ {
		if spans[i].from < spans[i-1].to {
			return fmt.Errorf("%s: chunk overlaps that of %s", spans[i].col, strings.TrimPrefix(spans[i-1].col, "row group "))
		}
	}
	return nil
}
