package scenarios

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"time"
)

// Record is a planted maintenance or inspection record of a Failures
// fleet: a point (End equal to Start) or an interval.
type Record struct {
	Site       string
	Start, End time.Time
	Point      bool
	Label      string
	Note       string
}

// The labels of the planted records and the regimes of a Failures fleet.
const (
	LabelFailure    = "bearing failure"
	LabelRepair     = "repair"
	LabelInspection = "inspection"
)

// Failures generates "bearings", a fleet of spec.Sites invented pumps
// sampled every 30 minutes for spec.Weeks weeks on flow (m³/h), current
// (A), vibration (mm/s) and bearing_temp (°C), with the maintenance
// records of what happened to them. About a third of the pumps develop a
// bearing defect on a random day: vibration grows as e^(d/3) − 1 (d days
// since the onset, capped at 12 times a fifth of the baseline, so mild for
// the first days and severe after a week) and the bearing runs hot, until
// the bearing fails 8 to 14 days after the onset. A "bearing failure"
// record, a point at 23:00 UTC of that day, is followed by a "repair"
// interval of 1 or 2 days from the next midnight, during which the pump
// stands; then it runs as before with a new bearing. Every defect runs to
// failure within the record. A quarter of the pumps also have an
// "inspection" interval of two hours on a day of normal running, which
// changes nothing. The truth regimes are "normal", "wearing" and "repair"
// (a window's regime is the one that held for most of it).
//
// Equal specs give equal fleets and records; spec.Name is ignored.
func Failures(spec Spec) (*Fleet, []Record, error) {
	if spec.Sites < 1 || spec.Weeks < 3 || spec.Start.IsZero() || !spec.Start.Equal(spec.Start.Truncate(24*time.Hour)) {
		return nil, nil, fmt.Errorf("scenarios: bearings: want at least 1 site, 3 weeks and a start at a midnight UTC, have %d sites, %d weeks, start %s",
			spec.Sites, spec.Weeks, spec.Start)
	}
	const (
		step    = 30 * time.Minute
		normal  = 0
		wearing = 1
		repair  = 2
	)
	spec.Name = "bearings"
	rng := rand.New(rand.NewPCG(uint64(spec.Seed), 0xbea))
	days := spec.Weeks * 7
	slots := int(24 * time.Hour / step)
	f := &Fleet{
		Name: spec.Name, Spec: spec, Step: step, Window: window,
		Channels: []Channel{{"flow", "m3/h"}, {"current", "A"}, {"vibration", "mm/s"}, {"bearing_temp", "degC"}},
		Regimes:  []string{normal: "normal", wearing: "wearing", repair: "repair"},
	}
	var recs []Record
	day := func(d int) time.Time { return spec.Start.AddDate(0, 0, d) }
	for i := range spec.Sites {
		s := &Site{ID: fmt.Sprintf("BR-%04d", i+1), Name: placeName(rng) + " pump",
			Lat: round(47+2*rng.Float64(), 6), Lon: round(8+3*rng.Float64(), 6)}
		s.Regimes = make([]int, days)
		rated := 60 * math.Exp(0.3*rng.NormFloat64())
		vib0 := 1.5 + 1.5*rng.Float64()
		peak := 10 + 8*rng.Float64() // hour of the daily demand peak
		onset, fail, back := -1, -1, -1
		if rng.Float64() < 1.0/3 {
			life := 8 + rng.IntN(7)
			stop := 1 + rng.IntN(2)
			if last := days - life - stop - 2; last > 2 {
				onset = 2 + rng.IntN(last-1)
				fail, back = onset+life, onset+life+1+stop
				for d := onset; d <= fail; d++ {
					s.Regimes[d] = wearing
				}
				for d := fail + 1; d < back; d++ {
					s.Regimes[d] = repair
				}
				t := day(fail).Add(23 * time.Hour)
				recs = append(recs,
					Record{Site: s.ID, Start: t, End: t, Point: true, Label: LabelFailure, Note: "seized; vibration alarm"},
					Record{Site: s.ID, Start: day(fail + 1), End: day(back), Label: LabelRepair, Note: "bearing replaced"})
				s.Switches = []Switch{
					{Site: s.ID, Time: day(onset), Onset: day(onset), Window: onset, From: normal, To: wearing},
					{Site: s.ID, Time: day(fail + 1), Onset: day(fail + 1), Window: fail + 1, From: wearing, To: repair},
					{Site: s.ID, Time: day(back), Onset: day(back), Window: back, From: repair, To: normal},
				}
			}
		}
		if rng.Float64() < 0.25 {
			d := rng.IntN(days)
			if s.Regimes[d] == normal {
				t := day(d).Add(10 * time.Hour)
				recs = append(recs, Record{Site: s.ID, Start: t, End: t.Add(2 * time.Hour), Label: LabelInspection, Note: "routine; nothing found"})
			}
		}
		n := days * slots
		r := Readings{Times: make([]int64, n), Values: make([][]float64, len(f.Channels))}
		for ch := range r.Values {
			r.Values[ch] = make([]float64, n)
		}
		for k := range n {
			t := spec.Start.Add(time.Duration(k) * step)
			d := k / slots
			hour := float64(k%slots) * step.Hours()
			r.Times[k] = t.UnixNano()
			air := 15 + 6*math.Cos(2*math.Pi*(hour-15)/24) + 0.5*rng.NormFloat64()
			load := 0.85 + 0.1*math.Cos(2*math.Pi*(hour-peak)/24) + 0.02*rng.NormFloat64()
			vib, heat := vib0, 0.0
			switch {
			case s.Regimes[d] == repair:
				r.Values[0][k], r.Values[1][k] = 0, 0
				r.Values[2][k] = round(0.05*vib0*math.Abs(1+rng.NormFloat64()), 3)
				r.Values[3][k] = round(air+2+0.3*rng.NormFloat64(), 2)
				continue
			case s.Regimes[d] == wearing:
				days := float64(k-onset*slots) / float64(slots)
				wear := math.Min(math.Exp(days/3)-1, 12)
				vib *= 1 + 0.2*wear
				heat = 1.5 * wear
			case back >= 0 && d >= back:
				vib *= 0.9 // a new bearing
			}
			r.Values[0][k] = round(rated*load, 2)
			r.Values[1][k] = round(0.35*rated*load*(1+0.02*rng.NormFloat64()), 2)
			r.Values[2][k] = round(vib*(1+0.12*rng.NormFloat64()), 3)
			r.Values[3][k] = round(air+20*load+heat+0.4*rng.NormFloat64(), 2)
		}
		s.Readings = r
		f.Sites = append(f.Sites, s)
	}
	return f, recs, nil
}

// WriteRecords writes records as a CSV file with the columns site, start,
// end (RFC 3339, UTC; end empty for a point), label and note.
func WriteRecords(path string, recs []Record) error {
	file, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("scenarios: %w", err)
	}
	if err := writeRecordsCSV(file, recs); err != nil {
		file.Close()
		return fmt.Errorf("scenarios: %s: %w", path, err)
	}
	if err := file.Close(); err != nil {
		return fmt.Errorf("scenarios: %w", err)
	}
	return nil
}

func writeRecordsCSV(w io.Writer, recs []Record) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"site", "start", "end", "label", "note"}); err != nil {
		return err
	}
	for _, r := range recs {
		end := ""
		if !r.Point {
			end = r.End.UTC().Format(time.RFC3339)
		}
		if err := cw.Write([]string{r.Site, r.Start.UTC().Format(time.RFC3339), end, r.Label, r.Note}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
