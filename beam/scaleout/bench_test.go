package scaleout

import (
	"context"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
)

// BenchmarkBeamVsLocal trains the same fleet (100 pumping stations over two
// weeks, the command's default settings) locally and on Prism in this
// process, and reports both times, their ratio and the Beam path's extra
// time per pipeline run. Prism is a test runner: the figures measure the
// overhead of running through Beam, not the speed of a cluster.
func BenchmarkBeamVsLocal(b *testing.B) {
	f, err := makeFleet(100, b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	o.Data, o.Sites = f.dumps, f.register
	var local, beam time.Duration
	pipelines := 0
	for b.Loop() {
		t0 := time.Now()
		lr, err := kinmap.Train(o)
		if err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		if _, err := Train(context.Background(), Options{Options: o, Work: b.TempDir()}); err != nil {
			b.Fatal(err)
		}
		local += t1.Sub(t0)
		beam += time.Since(t1)
		pipelines += lr.Model.Training.Epochs + 2 // windows, one per epoch, assignment
	}
	n := float64(b.N)
	b.ReportMetric(local.Seconds()/n, "local-s/op")
	b.ReportMetric(beam.Seconds()/n, "beam-s/op")
	b.ReportMetric(beam.Seconds()/local.Seconds(), "beam/local")
	b.ReportMetric((beam-local).Seconds()*1000/float64(pipelines), "extra-ms/pipeline")
}
