package timeline

import (
	"fmt"
	"math"

	"github.com/kinmap/kinmap/mapper"
)

// Config holds the decoding settings. A zero field takes its default.
type Config struct {
	// SwitchCost is the penalty per change of regime, in the units of the
	// scaled feature space (the same units as a quantization error). Zero
	// means automatic: twice the median quantization error of the model's
	// training windows. Moving a window by δ changes the difference of its
	// distances to two centroids by at most 2δ (triangle inequality), so a
	// one-window excursion to another regime and back, which costs two
	// switches, needs the window to be displaced by more than twice the
	// typical residual of a training window; a lasting switch only needs the
	// windows after it to fit the new regime better by one SwitchCost in
	// total.
	SwitchCost float64 `json:"switch_cost"`

	// MinDwell is the least number of windows a site spends in a regime on
	// each side of a switch; the decoding is the cheapest among the state
	// sequences that obey it, so a shorter stay is absorbed by a neighbouring
	// segment. A site whose windows all fit in one segment may have fewer.
	// Zero means 2; 1 disables the rule.
	MinDwell int `json:"min_dwell"`

	// UnfamiliarQ is the quantile of the training windows' quantization
	// errors above which a window is unfamiliar. Zero means 0.99.
	UnfamiliarQ float64 `json:"unfamiliar_q"`
}

// DefaultConfig returns the defaults: an automatic switch cost, a dwell of
// at least 2 windows and the 99th percentile for unfamiliar windows.
func DefaultConfig() Config {
	return Config{MinDwell: mapper.DefaultMinDwell, UnfamiliarQ: 0.99}
}

// ConfigError reports a field of Config out of its range.
type ConfigError struct {
	Field string  // the field of Config, such as "MinDwell"
	Value float64 // the value given
	Want  string  // the range allowed, in words, such as "in (0, 1]"
}

func (e *ConfigError) Error() string {
	return fmt.Sprintf("timeline: %s %g: want a value %s", e.Field, e.Value, e.Want)
}

// Validate reports the first field of cfg out of its range, as a
// *ConfigError. Zero fields take the defaults and are valid.
func (cfg Config) Validate() error {
	for _, f := range []struct {
		field string
		value float64
		ok    bool
		want  string
	}{
		{"SwitchCost", cfg.SwitchCost, cfg.SwitchCost >= 0 && !math.IsInf(cfg.SwitchCost, 1), "of 0 or more, finite"}, // false for NaN
		{"MinDwell", float64(cfg.MinDwell), cfg.MinDwell >= 0, "of 1 window or more"},
		{"UnfamiliarQ", cfg.UnfamiliarQ, cfg.UnfamiliarQ >= 0 && cfg.UnfamiliarQ <= 1, "in (0, 1]"},
	} {
		if !f.ok {
			return &ConfigError{Field: f.field, Value: f.value, Want: f.want}
		}
	}
	return nil
}
