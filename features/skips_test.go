package features

import "testing"

// The reasons a table skipped windows, summed over sites and worded in the
// order of their names.
func TestSkipReasons(t *testing.T) {
	tests := []struct {
		skipped map[string]Skips
		want    string
	}{
		{nil, "no windows at all"},
		{map[string]Skips{"a": {"coverage": 2}}, "2 for coverage"},
		{map[string]Skips{"a": {"coverage": 2, "empty": 1}, "b": {"coverage": 3}}, "5 for coverage, 1 for empty"},
	}
	for _, tt := range tests {
		tab := &Table{Skipped: tt.skipped}
		if got := tab.SkipReasons(); got != tt.want {
			t.Errorf("SkipReasons(%v) = %q, want %q", tt.skipped, got, tt.want)
		}
	}
}
