package features

import (
	"slices"
	"testing"
)

// Every stat a feature name can end in has a definition, once, and no
// definition names a stat that does not exist.
func TestDefinitions(t *testing.T) {
	stats := append(slices.Clone(statNames[:]), corrStat)
	var got []string
	for _, d := range Definitions() {
		if d.Text == "" {
			t.Errorf("%s: no text", d.Stat)
		}
		got = append(got, d.Stat)
	}
	if !slices.Equal(got, stats) {
		t.Errorf("definitions of %v, want %v", got, stats)
	}
	for name, want := range map[string]string{"flow.p95": "p95", "flow~pressure.corr": "corr", "bearing.temp.mean": "mean"} {
		if s := StatOf(name); s != want {
			t.Errorf("StatOf(%q) = %q, want %q", name, s, want)
		}
	}
}
