package attention

import (
	"strings"
	"testing"

	"github.com/kinmap/kinmap/events"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/timeline"
)

// classified gives the last n daily windows of site in ws the condition
// label at confidence conf.
func classified(ws []features.Window, site string, n int, label string, conf float64) {
	for i := len(ws) - 1; i >= 0 && n > 0; i-- {
		if ws[i].Site == site {
			ws[i].Condition, ws[i].ConditionConfidence = label, conf
			n--
		}
	}
}

// TestRankResembles checks where sites whose recent windows resemble a
// label rank. With daily windows and the default Recent of 7 days, a
// site's recent windows are the 8 whose end is within 7 days of its last
// end (days 20 to 27 of fleetOf's 28), so k windows at confidence c score
// k·c/8 (the mean of events.Resemble).
func TestRankResembles(t *testing.T) {
	const fail = "bearing failure"
	type cond struct {
		site  string
		n     int
		label string
		conf  float64
	}
	type want struct {
		site  string
		level Level
	}
	status := map[int]string{1: StatusNormal, 2: StatusNormal, 3: StatusWatch, 4: StatusFault}
	for _, tc := range []struct {
		name       string
		labels     []string
		conds      []cond
		after      map[string][2]int
		switches   []timeline.Switch
		unfamiliar map[string]int
		want       []want
		reason     string // in the first resembling row
	}{
		{
			name:   "closer resemblance first",
			labels: []string{fail, "impeller blocked"},
			conds:  []cond{{"a", 8, fail, 0.6}, {"b", 8, "impeller blocked", 0.9}},
			want:   []want{{"b", Resembles}, {"a", Resembles}},
			reason: `8 of 8 recent windows resemble windows labelled "impeller blocked" (confidence 0.90)`,
		},
		{
			name:       "below the user's verdicts, above unfamiliar windows and switches",
			labels:     []string{fail},
			conds:      []cond{{"c", 8, fail, 0.7}, {"f", 8, fail, 0.7}},
			after:      map[string][2]int{"a": {20, 4}, "b": {20, 2}, "f": {22, 3}},
			switches:   []timeline.Switch{{Site: "a", Time: at(20), From: 1, To: 4, Confidence: 0.8}, {Site: "b", Time: at(20), From: 1, To: 2, Confidence: 0.9}, {Site: "f", Time: at(22), From: 1, To: 3, Confidence: 0.8}},
			unfamiliar: map[string]int{"e": 4},
			want:       []want{{"a", Fault}, {"f", Watch}, {"c", Resembles}, {"e", Unfamiliar}, {"b", Switch}},
			reason:     `8 of 8 recent windows resemble windows labelled "bearing failure" (confidence 0.70)`,
		},
		{
			// 4 of 8 at 0.9 score 0.45 < ½; 5 of 8 at 0.9 score 0.5625.
			name:   "a week that leans to the label",
			labels: []string{fail},
			conds:  []cond{{"a", 4, fail, 0.9}, {"b", 5, fail, 0.9}},
			want:   []want{{"b", Resembles}},
			reason: `5 of 8 recent windows resemble windows labelled "bearing failure" (confidence 0.56)`,
		},
		{
			name:   "older windows do not count",
			labels: []string{fail},
			conds:  []cond{{"a", 28, fail, 0.9}, {"b", 8, fail, 0.9}},
			// a's 28 windows: only its last 8 are recent, as for b.
			want: []want{{"a", Resembles}, {"b", Resembles}},
		},
		{
			name:   "unknown, unlabelled and labels outside the knowledge do not count",
			labels: []string{fail, events.Unlabelled, events.Unknown},
			conds:  []cond{{"a", 8, events.Unlabelled, 0.9}, {"b", 8, events.Unknown, 0.9}, {"c", 8, "sensor recalibrated", 0.9}},
		},
		{
			name:  "no knowledge, no resemblance",
			conds: []cond{{"a", 8, fail, 0.9}},
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ws := fleetOf([]string{"a", "b", "c", "d", "e", "f"}, tc.after, tc.unfamiliar)
			for _, c := range tc.conds {
				classified(ws, c.site, c.n, c.label, c.conf)
			}
			rows := Rank(Input{Windows: ws, Switches: tc.switches, Status: status, Labels: tc.labels}, DefaultConfig())
			var got []want
			for _, r := range rows {
				got = append(got, want{r.Site, r.Level})
			}
			if len(got) != len(tc.want) {
				t.Fatalf("rows %v, want %v", got, tc.want)
			}
			for i := range got {
				if got[i] != tc.want[i] {
					t.Fatalf("rows %v, want %v", got, tc.want)
				}
			}
			if tc.reason == "" {
				return
			}
			for _, r := range rows {
				if r.Level == Resembles {
					if !strings.Contains(r.Reason, tc.reason) {
						t.Errorf("reason %q, want it to hold %q", r.Reason, tc.reason)
					}
					break
				}
			}
		})
	}
}
