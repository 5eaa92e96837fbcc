package labels

import (
	"bytes"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

func TestRead(t *testing.T) {
	for _, tc := range []struct {
		name, in string
		want     []Label
		err      string // substring of the error; "" for none
		row      int    // row of the error
		column   string // column of the error
	}{
		{name: "plain", in: "regime,name,status\n1,baseline,normal\n4,worn bearing,fault\n",
			want: []Label{{1, "baseline", "normal", 2}, {4, "worn bearing", "fault", 3}}},
		{name: "CRLF, any order, description ignored", in: "status,description,regime,name\r\nwatch,\"flow.std +1.8σ, x\",2,cycling\r\n",
			want: []Label{{2, "cycling", "watch", 2}}},
		{name: "semicolon and BOM", in: "\uFEFFregime;name;status\n3;\"a; b\";Fault\n",
			want: []Label{{3, "a; b", "fault", 2}}},
		{name: "spaces trimmed, empty clears", in: "Regime , Name,STATUS\n 5 ,  standby  , \n6,,\n",
			want: []Label{{5, "standby", "", 2}, {6, "", "", 3}}},
		{name: "name column only", in: "regime,name\n1,baseline\n", want: []Label{{1, "baseline", "", 2}}},
		{name: "blank rows skipped", in: "regime,name,status\n,,\n1,a,normal\n\n", want: []Label{{1, "a", "normal", 3}}},
		{name: "quoted newline keeps row numbers", in: "regime,name,status\n1,\"a\nb\",normal\n2,c,fault\n",
			err: "control character", row: 2, column: "name"},
		{name: "empty", in: "", err: "empty file"},
		{name: "header only", in: "regime,name,status\n", want: nil},
		{name: "unknown column", in: "regime,name,staus\n1,a,normal\n", err: "unknown column", row: 1, column: "staus"},
		{name: "column twice", in: "regime,name,name\n1,a,b\n", err: "appears twice", row: 1, column: "name"},
		{name: "no regime column", in: "name,status\na,normal\n", err: "must name the columns", row: 1},
		{name: "regime alone", in: "regime\n1\n", err: "must name the columns", row: 1},
		{name: "bad status", in: "regime,name,status\n1,a,normal\n2,b,broken\n", err: `status "broken"`, row: 3, column: "status"},
		{name: "regime not a number", in: "regime,name,status\nx,a,normal\n", err: "not a regime number", row: 2, column: "regime"},
		{name: "regime zero", in: "regime,name,status\n0,a,normal\n", err: "not a regime number", row: 2, column: "regime"},
		{name: "regime twice", in: "regime,name,status\n1,a,normal\n2,b,\n1,c,fault\n", err: "first on row 2", row: 4, column: "regime"},
		{name: "too few fields", in: "regime,name,status\n1,a\n", err: "wrong number of fields", row: 2},
		{name: "name too long", in: "regime,name\n1," + strings.Repeat("é", model.MaxNameLen+1) + "\n", err: "longer than", row: 2, column: "name"},
		{name: "name of the longest length", in: "regime,name\n1," + strings.Repeat("é", model.MaxNameLen) + "\n",
			want: []Label{{1, strings.Repeat("é", model.MaxNameLen), "", 2}}},
		{name: "invalid UTF-8", in: "regime,name\n1,a\xffb\n", err: "UTF-8", row: 2, column: "name"},
		{name: "bare quote", in: "regime,name\n1,a\"b\n", err: "bare", row: 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := Read(strings.NewReader(tc.in))
			if tc.err == "" {
				if err != nil {
					t.Fatal(err)
				}
				if fmt.Sprint(got) != fmt.Sprint(tc.want) {
					t.Errorf("got %v, want %v", got, tc.want)
				}
				return
			}
			var le *Error
			if err == nil || !strings.Contains(err.Error(), tc.err) || !errors.As(err, &le) {
				t.Fatalf("error %v, want one saying %q", err, tc.err)
			}
			if le.Row != tc.row || le.Column != tc.column {
				t.Errorf("error %q at row %d, column %q; want row %d, column %q", err, le.Row, le.Column, tc.row, tc.column)
			}
		})
	}
}

func TestReadTooLarge(t *testing.T) {
	in := "regime,name\n" + strings.Repeat("1,a\n", MaxBytes/4)
	if _, err := Read(strings.NewReader(in)); err == nil || !strings.Contains(err.Error(), "larger than") {
		t.Errorf("error %v for a file of %d bytes", err, len(in))
	}
}

func labelledModel() *model.Model {
	return &model.Model{Regimes: []mapper.Regime{
		{ID: 1, Description: "flow.std −0.7σ"},
		{ID: 2, Description: "vibration.p95 +2.6σ", Name: "old", Status: model.StatusWatch},
		{ID: 5, Description: "flow.flat +2.4σ"},
	}}
}

// What Write prints, Read reads back as the same labels, and Apply of it
// changes nothing.
func TestWriteReadsBack(t *testing.T) {
	m := labelledModel()
	m.Regimes[0].Name, m.Regimes[0].Status = `baseline, "A"`, model.StatusNormal
	var b bytes.Buffer
	if err := Write(&b, m.Regimes); err != nil {
		t.Fatal(err)
	}
	ls, err := Read(&b)
	if err != nil {
		t.Fatal(err)
	}
	want := []Label{{1, `baseline, "A"`, "normal", 2}, {2, "old", "watch", 3}, {5, "", "", 4}}
	if fmt.Sprint(ls) != fmt.Sprint(want) {
		t.Errorf("read back %v, want %v", ls, want)
	}
	if changed, err := Apply(m, ls); err != nil || len(changed) != 0 {
		t.Errorf("applying the model's own labels: %v, %v", changed, err)
	}
}

func TestApply(t *testing.T) {
	m := labelledModel()
	changed, err := Apply(m, []Label{{Regime: 1, Name: "baseline", Status: "normal"}, {Regime: 2}, {Regime: 5, Status: "fault"}})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{`regime 1: "baseline" normal (was unlabelled)`, `regime 2: unlabelled (was "old" watch)`, `regime 5: fault (was unlabelled)`}
	if fmt.Sprint(changed) != fmt.Sprint(want) {
		t.Errorf("changes %q, want %q", changed, want)
	}
	if g := m.Regimes; g[0].Name != "baseline" || g[0].Status != "normal" || g[1].Name != "" || g[1].Status != "" || g[2].Status != "fault" {
		t.Errorf("regimes %+v", g)
	}

	// An unknown regime or a bad label leaves the model as it was.
	m = labelledModel()
	for _, ls := range [][]Label{
		{{Regime: 1, Name: "a"}, {Regime: 3, Name: "b", Row: 3}},
		{{Regime: 1, Name: "a"}, {Regime: 2, Status: "broken", Row: 3}},
	} {
		_, err := Apply(m, ls)
		var le *Error
		if !errors.As(err, &le) || le.Row != 3 {
			t.Errorf("Apply(%v): error %v, want one at row 3", ls, err)
		}
		if fmt.Sprint(m.Regimes) != fmt.Sprint(labelledModel().Regimes) {
			t.Errorf("Apply(%v) changed the model: %+v", ls, m.Regimes)
		}
	}
}

// Read never panics, and what it accepts has valid labels and distinct
// positive regime numbers, and reads back the same through Write.
func FuzzRead(f *testing.F) {
	f.Add("regime,name,status\n1,baseline,normal\n4,worn bearing,fault\n")
	f.Add("\uFEFFregime;name;status\n3;\"a; b\";Fault\n")
	f.Add("status,description,regime,name\r\nwatch,\"x, y\",2,cycling\r\n")
	f.Fuzz(func(t *testing.T, in string) {
		ls, err := Read(strings.NewReader(in))
		if err != nil {
			return
		}
		seen := map[int]bool{}
		regs := make([]mapper.Regime, len(ls))
		for i, l := range ls {
			if l.Regime < 1 || seen[l.Regime] {
				t.Fatalf("regime %d accepted twice or not positive", l.Regime)
			}
			seen[l.Regime] = true
			if err := model.CheckLabel(l.Name, l.Status); err != nil {
				t.Fatalf("accepted label %+v: %v", l, err)
			}
			regs[i] = mapper.Regime{ID: l.Regime, Name: l.Name, Status: l.Status}
		}
		var b bytes.Buffer
		if err := Write(&b, regs); err != nil {
			t.Fatal(err)
		}
		again, err := Read(&b)
		if err != nil {
			t.Fatalf("what Write wrote does not read: %v\n%s", err, b.String())
		}
		for i := range ls {
			if a, b := ls[i], again[i]; a.Regime != b.Regime || a.Name != b.Name || a.Status != b.Status {
				t.Fatalf("read back %+v, wrote %+v", b, a)
			}
		}
	})
}
