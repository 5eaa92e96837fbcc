package ingest

import (
	"fmt"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
)

// The number of goroutines changes nothing in what Read returns: the same
// series, the same duplicates kept (the last read), the same counts, for a
// CSV dump (read in order, one batch at a time) and a Parquet dump of many
// row groups (read in any order), both with readings out of order and
// repeated times.
func TestReadSameForAnyWorkers(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	start := time.Date(2024, 3, 1, 0, 0, 0, 0, time.UTC)
	var csv strings.Builder
	csv.WriteString("site,time,channel,value\n")
	var data [][]any
	for range 6000 {
		site := fmt.Sprintf("S%02d", rng.IntN(40))
		at := start.Add(time.Duration(rng.IntN(50)) * time.Hour) // repeats on purpose
		ch := []string{"flow", "temp", "vib"}[rng.IntN(3)]
		v := float64(rng.IntN(1000)) / 8
		fmt.Fprintf(&csv, "%s,%s,%s,%g\n", site, at.Format(time.RFC3339), ch, v)
		data = append(data, []any{site, at.UnixMilli(), ch, v})
	}
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}},
		{Name: "channel", Type: arrow.BinaryTypes.String},
		{Name: "value", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	rec := record(t, schema, data)
	defer rec.Release()
	paths := map[string]string{
		"csv":     writeFile(t, "dump.csv", []byte(csv.String())),
		"parquet": writeArrowParquet(t, "dump.parquet", rec, 97, false),
	}
	for format, path := range paths {
		var ref *Dataset
		for _, workers := range []int{1, 2, 3, 0} {
			ds := mustRead(t, []string{path}, func(o *Options) { o.Workers = workers })
			if ds.Summary.Duplicates == 0 {
				t.Fatalf("%s: no duplicates to keep the last of", format)
			}
			if ref == nil {
				ref = ds
				continue
			}
			if !reflect.DeepEqual(ds, ref) {
				t.Errorf("%s: %d workers read another dataset than 1", format, workers)
			}
		}
	}
}
