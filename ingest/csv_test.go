package ingest

import (
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

func TestSniffDelimiter(t *testing.T) {
	tests := []struct {
		head string
		want rune
	}{
		{"site,time,value\n1;2;3\n", ','},
		{"site;time;value\n", ';'},
		{"site\ttime\tvalue\r\n", '\t'},
		{`"a,b";c;d` + "\n", ';'}, // the quoted comma does not count
		{"site", ','},
		{"a;b,c\n", ','}, // a tie goes to the comma
		{"a\tb;c;d\te\tf\n", '\t'},
	}
	for _, tt := range tests {
		if got := sniffDelimiter([]byte(tt.head)); got != tt.want {
			t.Errorf("sniffDelimiter(%q) = %q, want %q", tt.head, got, tt.want)
		}
	}
}

// TestCSVDialects reads the same long dump in the CSV variants RFC 4180
// allows or that exports commonly produce (CRLF line ends, §2.1; quoted
// fields, §2.5-2.7), plus a byte order mark, the three delimiters and gzip.
func TestCSVDialects(t *testing.T) {
	base := "site,time,channel,value\nA,2024-01-01T00:00:00Z,flow,1.5\nA,2024-01-01T00:05:00Z,flow,2\n"
	variants := map[string][]byte{
		"plain":            []byte(base),
		"crlf":             []byte(strings.ReplaceAll(base, "\n", "\r\n")),
		"bom":              append(slices.Clone(utf8BOM), base...),
		"semicolon":        []byte(strings.ReplaceAll(base, ",", ";")),
		"tab":              []byte(strings.ReplaceAll(base, ",", "\t")),
		"quoted":           []byte("\"site\",\"time\",\"channel\",\"value\"\n\"A\",\"2024-01-01T00:00:00Z\",\"flow\",\"1.5\"\nA,2024-01-01T00:05:00Z,\"flow\",2\n"),
		"gzip":             gzipped(t, []byte(base)),
		"no final newline": []byte(strings.TrimSuffix(base, "\n")),
	}
	for name, content := range variants {
		ds := mustRead(t, []string{writeFile(t, "d.csv", content)}, nil)
		ser := seriesOf(t, ds, "A", "flow")
		if !slices.Equal(ser.Values, []float64{1.5, 2}) || ser.Times[1]-ser.Times[0] != 300e9 {
			t.Errorf("%s: %+v", name, ser)
		}
	}
}

// TestGlobAndFileOrder reads a week split in parts through a pattern; a
// reading repeated in a later file wins.
func TestGlobAndFileOrder(t *testing.T) {
	dir := t.TempDir()
	parts := map[string]string{
		"part-2.csv": "site,time,channel,value\nA,2,flow,20\nA,3,flow,30\n",
		"part-1.csv": "site,time,channel,value\nA,1,flow,10\nA,2,flow,-1\n",
		"extra.csv":  "site,time,channel,value\nA,2,flow,99\n",
	}
	for name, text := range parts {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// A folder the pattern matches is passed over.
	if err := os.Mkdir(filepath.Join(dir, "part-old.csv"), 0o755); err != nil {
		t.Fatal(err)
	}
	ds := mustRead(t, []string{filepath.Join(dir, "part-*.csv")}, nil)
	if ser := seriesOf(t, ds, "A", "flow"); !slices.Equal(ser.Values, []float64{10, 20, 30}) {
		t.Errorf("glob: %v", ser.Values)
	}
	if ds.Summary.Duplicates != 1 || len(ds.Summary.Files) != 2 || filepath.Base(ds.Summary.Files[0].Path) != "part-1.csv" {
		t.Errorf("summary %+v", ds.Summary)
	}
	// Files in the order given: extra.csv last, so its reading wins.
	ds = mustRead(t, []string{filepath.Join(dir, "part-*.csv"), filepath.Join(dir, "extra.csv")}, nil)
	if ser := seriesOf(t, ds, "A", "flow"); !slices.Equal(ser.Values, []float64{10, 99, 30}) {
		t.Errorf("order given: %v", ser.Values)
	}
}

func TestChannelSelection(t *testing.T) {
	wide := writeFile(t, "wide.csv", []byte("site,time,flow,temp,note\nA,1,1,2,x\n"))
	long := writeFile(t, "long.csv", []byte("site,time,channel,value\nA,1,flow,1\nA,1,temp,2\nA,1,rain,3\n"))
	for _, path := range []string{wide, long} {
		ds := mustRead(t, []string{path}, func(o *Options) { o.Channels = []string{"temp"} })
		if !slices.Equal(ds.Channels, []string{"temp"}) || ds.Summary.Readings != 1 {
			t.Errorf("%s: channels %v, %d readings", path, ds.Channels, ds.Summary.Readings)
		}
	}
	ds := mustRead(t, []string{wide}, nil)
	if !slices.Equal(ds.Channels, []string{"flow", "temp"}) || !slices.Equal(ds.Summary.SkippedColumns, []string{"note"}) {
		t.Errorf("all channels %v, skipped %v", ds.Channels, ds.Summary.SkippedColumns)
	}
}

// TestWideCSVColumnTypes follows columns whose type shows only after a
// whole batch of blank cells.
func TestWideCSVColumnTypes(t *testing.T) {
	var b strings.Builder
	b.WriteString("site,time,late,text,blank,,flow\n")
	n := csvBatchRows + 10
	for i := 0; i < n; i++ {
		late, text := "", ""
		if i >= csvBatchRows {
			late, text = fmt.Sprint(i), "word"
		}
		fmt.Fprintf(&b, "S,%d,%s,%s,,%d,%d\n", i, late, text, i, i)
	}
	ds := mustRead(t, []string{writeFile(t, "wide.csv", []byte(b.String()))}, nil)
	if !slices.Equal(ds.Channels, []string{"flow", "late"}) {
		t.Errorf("channels %v", ds.Channels)
	}
	if !slices.Equal(ds.Summary.SkippedColumns, []string{"(unnamed column 6)", "text"}) {
		t.Errorf("skipped %v", ds.Summary.SkippedColumns)
	}
	// Blank cells: late has csvBatchRows, blank has n.
	if got := ds.Summary.Dropped[DropNullValue]; got != int64(csvBatchRows+n) {
		t.Errorf("null values %d, want %d", got, csvBatchRows+n)
	}
	if ser := seriesOf(t, ds, "S", "late"); ser.Len() != 10 || ser.Values[0] != float64(csvBatchRows) {
		t.Errorf("late: %d readings from %v", ser.Len(), ser.Values[:1])
	}
	// A non-number in a column that held numbers in an earlier batch.
	bad := strings.Replace(b.String(), fmt.Sprintf(",%d,%d\n", n-1, n-1), fmt.Sprintf(",%d,oops\n", n-1), 1)
	if _, err := Read([]string{writeFile(t, "bad.csv", []byte(bad))}, DefaultOptions()); err == nil ||
		!strings.Contains(err.Error(), fmt.Sprintf(`line %d: column "flow": "oops" is not a number`, n+1)) {
		t.Errorf("late non-number: %v", err)
	}
}

func TestNaiveTimeAndDrops(t *testing.T) {
	text := "site,time,channel,value\n" +
		"A,2024-01-01T00:00:00,flow,1\n" + // no zone: read as UTC
		"A,2024-01-02,flow,2\n" +
		",2024-01-03T00:00:00Z,flow,3\n" +
		"A,,flow,4\n" +
		"A,2024-01-05T00:00:00Z,,5\n" +
		"A,99999999999,flow,6\n" + // seconds past year 2262
		"A,2024-01-06T00:00:00Z,flow,NaN\n" +
		"A,2024-01-07T00:00:00Z,flow,-Inf\n" +
		"A,2024-01-08T00:00:00Z,flow,1e400\n" // beyond float64: +Inf
	ds := mustRead(t, []string{writeFile(t, "d.csv", []byte(text))}, nil)
	want := map[string]int64{DropNullSite: 1, DropNullTime: 1, DropNullChannel: 1, DropTimeRange: 1, DropNaN: 1, DropInf: 2}
	if !reflect.DeepEqual(ds.Summary.Dropped, want) || !ds.Summary.NaiveTime {
		t.Errorf("dropped %v (want %v), naive %v", ds.Summary.Dropped, want, ds.Summary.NaiveTime)
	}
	ser := seriesOf(t, ds, "A", "flow")
	if !slices.Equal(ser.Times, []int64{mustTime(t, "2024-01-01T00:00:00Z").UnixNano(), mustTime(t, "2024-01-02T00:00:00Z").UnixNano()}) {
		t.Errorf("times %v", ser.Times)
	}
}

func TestSummaryString(t *testing.T) {
	reg, err := buildRegister("site", nil, []*Site{{ID: "X"}})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("site,time,flow,note\n")
	for i := 0; i < 8; i++ {
		fmt.Fprintf(&b, "S%d,2024-01-01T00:0%d:00,%d,n\n", i, i, i)
	}
	b.WriteString("S0,2024-01-01T00:00:00,,n\nS0,2024-01-01T00:00:00,9,n\n")
	ds := mustRead(t, []string{writeFile(t, "d.csv", []byte(b.String()))}, func(o *Options) { o.Register = reg })
	got := ds.Summary.String()
	for _, part := range []string{
		"read 1 file (csv): 10 rows, wide layout",
		"kept 8 readings of 8 sites on 1 channel: flow",
		"time span 2024-01-01T00:00:00Z to 2024-01-01T00:07:00Z (7m0s)",
		"dropped: null value 1",
		"duplicates: 1 reading replaced",
		"skipped non-numeric columns: note",
		"no time zone",
		"8 sites not in the site register (no position): S0, S1, S2, S3, S4 and 3 more",
	} {
		if !strings.Contains(got, part) {
			t.Errorf("summary lacks %q:\n%s", part, got)
		}
	}
}

// TestManyDistinctKeys reads a batch with as many sites and channels as
// rows, too many pairs for a table of all of them.
func TestManyDistinctKeys(t *testing.T) {
	var b strings.Builder
	b.WriteString("site,time,channel,value\n")
	const n = 3000
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "s%d,%d,c%d,%d\n", i, i%7, i, i)
	}
	fmt.Fprintf(&b, "s5,9,c5,-1\ns5,5,c5,-2\n") // two more readings of one series
	ds := mustRead(t, []string{writeFile(t, "many.csv", []byte(b.String()))}, nil)
	if len(ds.Sites) != n || len(ds.Channels) != n || ds.Summary.Readings != n+1 || ds.Summary.Duplicates != 1 {
		t.Fatalf("%d sites, %d channels, %d readings, %d duplicates", len(ds.Sites), len(ds.Channels), ds.Summary.Readings, ds.Summary.Duplicates)
	}
	if ser := seriesOf(t, ds, "s5", "c5"); !slices.Equal(ser.Values, []float64{-2, -1}) || !slices.Equal(ser.Times, []int64{5e9, 9e9}) {
		t.Errorf("s5/c5: %+v", ser)
	}
	if ser := seriesOf(t, ds, "s2999", "c2999"); !slices.Equal(ser.Values, []float64{2999}) {
		t.Errorf("s2999/c2999: %+v", ser)
	}
}

// TestManyDistinctKeysWide does the same for a wide dump.
func TestManyDistinctKeysWide(t *testing.T) {
	var b strings.Builder
	b.WriteString("site,time,a,b,c,d,e\n")
	const n = 20000
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "s%d,%d,%d,1,2,3,\n", i, i%5, i)
	}
	ds := mustRead(t, []string{writeFile(t, "many.csv", []byte(b.String()))}, nil)
	if len(ds.Sites) != n || !slices.Equal(ds.Channels, []string{"a", "b", "c", "d"}) || ds.Summary.Readings != 4*n {
		t.Fatalf("%d sites, channels %v, %d readings", len(ds.Sites), ds.Channels, ds.Summary.Readings)
	}
	if ser := seriesOf(t, ds, "s12345", "a"); !slices.Equal(ser.Values, []float64{12345}) || ser.Times[0] != 0 {
		t.Errorf("s12345/a: %+v", ser)
	}
}

// Sentinels in a wide dump are dropped and counted by site, like those of a
// long one (reference_test.go); values just below the rule are kept.
func TestWideSentinelsBySite(t *testing.T) {
	path := writeFile(t, "wide.csv", []byte("site,time,flow,temp\n"+
		"A,2024-01-01T00:00:00Z,1,-3.4028234663852886e+38\n"+
		"B,2024-01-01T00:00:00Z,1.7976931348623157e+308,2\n"+
		"B,2024-01-01T00:01:00Z,-1e30,2\n"+
		"B,2024-01-01T00:02:00Z,-9.99e29,2\n"))
	ds := mustRead(t, []string{path}, nil)
	if want := map[string]map[string]int64{"A": {DropSentinel: 1}, "B": {DropSentinel: 2}}; !reflect.DeepEqual(ds.Summary.SiteDropped, want) {
		t.Errorf("drops by site %v, want %v", ds.Summary.SiteDropped, want)
	}
	if got := ds.Summary.Dropped[DropSentinel]; got != 3 {
		t.Errorf("%d sentinels dropped, want 3", got)
	}
	if got := seriesOf(t, ds, "B", "flow"); len(got.Values) != 1 || got.Values[0] != -9.99e29 {
		t.Errorf("B flow = %v, want the one value below the rule", got.Values)
	}
}

// Rows dropped for their time or channel count against their site, as
// values do; a row without a site counts against none.
func TestDropsBySite(t *testing.T) {
	path := writeFile(t, "long.csv", []byte("site,time,channel,value\n"+
		"A,2024-01-01T00:00:00Z,flow,1\n"+
		"A,,flow,2\n"+ // null time
		"A,2024-01-01T00:02:00Z,,3\n"+ // null channel
		"B,2024-01-01T00:00:00Z,flow,1\n"+
		"B,2300-01-01T00:00:00Z,flow,2\n"+ // beyond the int64 nanoseconds
		"B,2024-01-01T00:03:00Z,flow,NaN\n"+
		",2024-01-01T00:04:00Z,flow,5\n")) // null site
	ds := mustRead(t, []string{path}, nil)
	want := map[string]map[string]int64{
		"A": {DropNullTime: 1, DropNullChannel: 1},
		"B": {DropTimeRange: 1, DropNaN: 1},
	}
	if !reflect.DeepEqual(ds.Summary.SiteDropped, want) {
		t.Errorf("drops by site %v, want %v", ds.Summary.SiteDropped, want)
	}
	if got := ds.Summary.Dropped[DropNullSite]; got != 1 {
		t.Errorf("%d rows dropped without a site, want 1", got)
	}
}
