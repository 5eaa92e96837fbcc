package model

import (
	"bytes"
	"reflect"
	"strings"
	"testing"
)

// TestModelConditions: a model's label knowledge reads back as written, a
// model without it reads as nil (as every file written before it), and
// counts that do not fit the map are refused.
func TestModelConditions(t *testing.T) {
	mdl, _, _ := fitted(t)
	units := mdl.Map.Units()
	good := &Conditions{Labels: []string{"bearing failure", "repair"}, Counts: make([][]int, units), Span: "a week before", Events: 4}
	for u := range good.Counts {
		good.Counts[u] = []int{u % 2, 0, u}
	}
	tests := []struct {
		name  string
		c     *Conditions
		wrong string // "" when the file must read back
	}{
		{"none", nil, ""},
		{"counts", good, ""},
		{"short", &Conditions{Labels: good.Labels, Counts: good.Counts[1:]}, "label counts for"},
		{"unsorted", &Conditions{Labels: []string{"repair", "bearing failure"}, Counts: good.Counts}, "not sorted"},
		{"empty label", &Conditions{Labels: []string{""}, Counts: make([][]int, units)}, "empty label"},
		{"negative", &Conditions{Labels: good.Labels, Counts: append([][]int{{-1, 0, 0}}, good.Counts[1:]...)}, "negative"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := *mdl
			m.Conditions = tc.c
			var buf bytes.Buffer
			if err := m.Write(&buf); err != nil {
				t.Fatal(err)
			}
			if tc.c == nil && bytes.Contains(buf.Bytes(), []byte(`"Conditions"`)) {
				t.Error("a model without knowledge writes a Conditions field; older readers would refuse it")
			}
			back, err := Read(&buf)
			switch {
			case tc.wrong == "" && err != nil:
				t.Fatal(err)
			case tc.wrong == "" && !reflect.DeepEqual(back.Conditions, tc.c):
				t.Errorf("read back %+v, wrote %+v", back.Conditions, tc.c)
			case tc.wrong != "" && (err == nil || !strings.Contains(err.Error(), tc.wrong)):
				t.Errorf("got %v, want an error saying %q", err, tc.wrong)
			}
		})
	}
}
