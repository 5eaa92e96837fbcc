package kinmap

import (
	"strings"
	"testing"

	"github.com/kinmap/kinmap/mapper"
)

// A marginal choice names the setting that tries the runner-up, by its
// field (the command words it with its option); a clear one and a given K
// do not. Areas folded as phases are named.
func TestRegimeChoiceNote(t *testing.T) {
	tests := []struct {
		c      mapper.Choice
		phases []string
		want   string
		not    string
	}{
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 6, RunnerUpP: 4e-4, Marginal: true}, nil, "re-run with 6 regimes (mapper.Config.Regimes) to see the other", ""},
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 4, RunnerUpP: 1e-20}, nil, "a clear choice", "Regimes)"},
		{mapper.Choice{K: 3, Given: true}, nil, "3 regimes, as set", "Regimes)"},
		{mapper.Choice{K: 3, Given: true, Kept: true}, nil, "3 regimes, kept from the model updated", "as set"},
		// A phase: the regimes held and the phases first, then the
		// grouping's number, which the runner-up is one split from, and
		// the number that keeps every area a regime.
		{mapper.Choice{K: 3, Alpha: 1e-4, RunnerUp: 5, RunnerUpP: 1e-20}, []string{"the area found as regime 4 is a phase of regime 2"},
			"3 regimes held by the sites and 1 phase (the area found as regime 4 is a phase of regime 2); the grouping: 4 regimes found; runner-up 5: ",
			"to see the other"},
		{mapper.Choice{K: 3, Alpha: 1e-4, RunnerUp: 5, RunnerUpP: 1e-20}, []string{"the area found as regime 4 is a phase of regime 2"},
			"a clear choice; re-run with 4 regimes (mapper.Config.Regimes) to keep every area found a regime (a number given is never folded)", ""},
		{mapper.Choice{K: 2, Alpha: 1e-4, RunnerUp: 3, RunnerUpP: 4e-4, Marginal: true}, []string{"the area found as regime 3 is a phase of regime 1", "the area found as regime 4 is a phase of regime 2"},
			"2 regimes held by the sites and 2 phases (the area found as regime 3 is a phase of regime 1; the area found as regime 4 is a phase of regime 2); the grouping: 4 regimes found; runner-up 3: the split that undoes it",
			""},
		{mapper.Choice{K: 2, Alpha: 1e-4, RunnerUp: 3, RunnerUpP: 4e-4, Marginal: true}, []string{"the area found as regime 3 is a phase of regime 1", "the area found as regime 4 is a phase of regime 2"},
			"so the choice is marginal: re-run with 3 regimes (mapper.Config.Regimes) to see the other, or with 4 to keep every area found a regime (a number given is never folded)", ""},
	}
	for _, tt := range tests {
		got := regimeChoice(&tt.c, tt.phases)
		if !strings.Contains(got.Note, tt.want) || tt.not != "" && strings.Contains(got.Note, tt.not) {
			t.Errorf("%+v: note %q, want %q without %q", tt.c, got.Note, tt.want, tt.not)
		}
		if got.K != tt.c.K || got.RunnerUp != tt.c.RunnerUp {
			t.Errorf("%+v: recorded %+v", tt.c, got.Choice)
		}
		if found := tt.c.K + len(tt.phases); len(tt.phases) > 0 && got.Found != found || len(tt.phases) == 0 && got.Found != 0 {
			t.Errorf("%+v with %d phases: found %d, want %d (0 without phases)", tt.c, len(tt.phases), got.Found, found)
		}
	}
}
