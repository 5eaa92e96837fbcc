package timeline

import (
	"errors"
	"math"
	"testing"
)

// Validate names the field out of its range, so that a command can word
// it with its own option; zero fields are the defaults and valid.
func TestConfigValidate(t *testing.T) {
	tests := []struct {
		cfg   Config
		field string // "" for valid
		want  string
	}{
		{Config{}, "", ""},
		{DefaultConfig(), "", ""},
		{Config{SwitchCost: 3, MinDwell: 1, UnfamiliarQ: 1}, "", ""},
		{Config{SwitchCost: -0.5}, "SwitchCost", "of 0 or more, finite"},
		{Config{SwitchCost: math.NaN()}, "SwitchCost", "of 0 or more, finite"},
		{Config{SwitchCost: math.Inf(1)}, "SwitchCost", "of 0 or more, finite"},
		{Config{MinDwell: -1}, "MinDwell", "of 1 window or more"},
		{Config{UnfamiliarQ: -0.1}, "UnfamiliarQ", "in (0, 1]"},
		{Config{UnfamiliarQ: 1.5}, "UnfamiliarQ", "in (0, 1]"},
		{Config{UnfamiliarQ: math.NaN()}, "UnfamiliarQ", "in (0, 1]"},
	}
	for _, tt := range tests {
		err := tt.cfg.Validate()
		var ce *ConfigError
		switch {
		case tt.field == "" && err != nil:
			t.Errorf("%+v: Validate() = %v, want nil", tt.cfg, err)
		case tt.field == "":
		case !errors.As(err, &ce):
			t.Errorf("%+v: Validate() = %v, want a ConfigError for %s", tt.cfg, err, tt.field)
		case ce.Field != tt.field || ce.Want != tt.want:
			t.Errorf("%+v: Validate() = %+v, want field %s, range %q", tt.cfg, ce, tt.field, tt.want)
		}
	}
}
