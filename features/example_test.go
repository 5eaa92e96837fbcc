package features_test

import (
	"fmt"
	"strings"
	"time"

	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
)

func ExampleExtract() {
	// One pump, one reading every 10 minutes for two days: a flow that
	// rises by 1/48 a reading (0.125 an hour) through the first day, then
	// stays at 3.
	start := time.Date(2024, 3, 4, 0, 0, 0, 0, time.UTC)
	var flow ingest.Series
	for i := range 2 * 144 {
		flow.Times = append(flow.Times, start.Add(time.Duration(i)*10*time.Minute).UnixNano())
		flow.Values = append(flow.Values, ramp(i))
	}
	ds := &ingest.Dataset{
		Channels: []string{"flow"},
		Sites: []*ingest.SiteData{{
			ID:     "P-017",
			Info:   &ingest.Site{ID: "P-017", Lat: 52.37, Lon: 4.89, Located: true},
			Series: map[string]ingest.Series{"flow": flow},
		}},
	}
	cfg := features.DefaultConfig()
	cfg.Features = "mean,max,trend,flat,count"
	tab, err := features.Extract(ds, cfg)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(strings.Join(tab.Names, " "))
	for _, w := range tab.Windows {
		fmt.Printf("%s %s (%.2f, %.2f):", w.Site, w.Start.Format(time.DateOnly), w.Lat, w.Lon)
		for _, v := range w.Values {
			fmt.Printf(" %.4g", v)
		}
		fmt.Println()
	}
	// Output:
	// flow.mean flow.max flow.trend flow.flat flow.count
	// P-017 2024-03-04 (52.37, 4.89): 1.49 2.979 0.125 0 144
	// P-017 2024-03-05 (52.37, 4.89): 3 3 0 1 144
}

func ramp(i int) float64 {
	if i < 144 {
		return float64(i) / 48
	}
	return 3
}
