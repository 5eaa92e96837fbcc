package ingest_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"

	"github.com/kinmap/kinmap/ingest"
)

func ExampleRead() {
	dir, err := os.MkdirTemp("", "ingest-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "week.csv")
	// A long dump: one reading per row. The second reading of P1 flow at
	// 00:10 replaces the first; the blank value is dropped.
	dump := "site,time,channel,value\n" +
		"P1,2024-03-04T00:00:00Z,flow,12.5\n" +
		"P1,2024-03-04T00:10:00Z,flow,13\n" +
		"P1,2024-03-04T00:10:00Z,flow,13.25\n" +
		"P2,2024-03-04T00:00:00Z,flow,\n" +
		"P2,2024-03-04T00:00:00Z,pressure,4.1\n"
	if err := os.WriteFile(path, []byte(dump), 0o644); err != nil {
		log.Fatal(err)
	}
	ds, err := ingest.Read([]string{path}, ingest.DefaultOptions())
	if err != nil {
		log.Fatal(err)
	}
	for _, s := range ds.Sites {
		for _, ch := range ds.Channels {
			if ser, ok := s.Series[ch]; ok {
				fmt.Println(s.ID, ch, ser.Values)
			}
		}
	}
	fmt.Println(ds.Summary.Readings, "readings,", ds.Summary.Duplicates, "duplicate,", ds.Summary.Dropped)
	// Output:
	// P1 flow [12.5 13.25]
	// P2 pressure [4.1]
	// 3 readings, 1 duplicate, map[null value:1]
}
