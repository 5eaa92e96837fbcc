package scenarios

import (
	"os"
	"testing"
)

// BenchmarkDefault generates and writes each scenario at its default size.
func BenchmarkDefault(b *testing.B) {
	for _, name := range Names() {
		b.Run(name, func(b *testing.B) {
			spec, err := DefaultSpec(name)
			if err != nil {
				b.Fatal(err)
			}
			var readings, bytes int64
			for b.Loop() {
				f, err := Generate(spec)
				if err != nil {
					b.Fatal(err)
				}
				paths, err := f.Write(b.TempDir())
				if err != nil {
					b.Fatal(err)
				}
				readings, bytes = 0, 0
				for range f.longRows() {
					readings++
				}
				for _, p := range paths {
					st, err := os.Stat(p)
					if err != nil {
						b.Fatal(err)
					}
					bytes += st.Size()
				}
			}
			b.ReportMetric(float64(readings), "readings")
			b.ReportMetric(float64(bytes)/1e6, "MB")
			b.ReportMetric(float64(readings)*float64(b.N)/b.Elapsed().Seconds(), "readings/s")
		})
	}
}

// BenchmarkGenerate measures Generate alone at the default pumping size.
func BenchmarkGenerate(b *testing.B) {
	spec, err := DefaultSpec("pumping")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Generate(spec); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(spec.Sites*spec.Weeks*7*144*5)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}
