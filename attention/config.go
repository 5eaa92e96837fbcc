package attention

import "fmt"

// ConfigError reports a field of Config out of its range.
type ConfigError struct {
	Field string  // the field of Config, such as "MinConfidence"
	Value float64 // the value given
	Want  string  // the range allowed, in words, such as "in (0, 1]"
}

func (e *ConfigError) Error() string {
	return fmt.Sprintf("attention: %s %g: want a value %s", e.Field, e.Value, e.Want)
}

// Validate reports the first field of c out of its range, as a
// *ConfigError. Zero fields take the defaults and are valid.
func (c Config) Validate() error {
	share := func(v float64) bool { return v >= 0 && v <= 1 } // false for NaN
	for _, f := range []struct {
		field string
		value float64
		ok    bool
		want  string
	}{
		{"MinConfidence", c.MinConfidence, share(c.MinConfidence), "in (0, 1]"},
		{"LongStay", float64(c.LongStay), c.LongStay >= 0, "of 1 window or more"},
		{"Nearby", float64(c.Nearby), c.Nearby >= 0, "of 0 or more"},
		{"UnfamiliarRate", c.UnfamiliarRate, share(c.UnfamiliarRate) && c.UnfamiliarRate < 1, "in (0, 1)"},
		{"UnfamiliarAlpha", c.UnfamiliarAlpha, share(c.UnfamiliarAlpha) && c.UnfamiliarAlpha < 1, "in (0, 1)"},
		{"FleetAlpha", c.FleetAlpha, share(c.FleetAlpha) && c.FleetAlpha < 1, "in (0, 1)"},
		{"MinFleetSites", float64(c.MinFleetSites), c.MinFleetSites == 0 || c.MinFleetSites >= 2, "of 2 sites or more"},
		{"Recent", float64(c.Recent), c.Recent >= 0, "of 0 or more"},
		{"MinResemblance", c.MinResemblance, share(c.MinResemblance), "in (0, 1]"},
	} {
		if !f.ok {
			return &ConfigError{Field: f.field, Value: f.value, Want: f.want}
		}
	}
	return nil
}
