// Package scaleout runs the kinmap pipeline on Apache Beam, for fleets whose
// readings outgrow one machine: the dumps are read and cut into windows on
// the runner's workers, and every batch-map epoch is a Beam combine of the
// mapper package's per-unit sums. On the same data, seed and settings it
// gives the model, regimes and timelines of kinmap.Train.
//
// # Pipelines
//
// Train runs several Beam pipelines, all on the runner of Options.Run, with
// a driver (the calling process) between them:
//
//  1. Windows: one element per dump file; each is read whole with the
//     project's reader, its readings keyed by site and grouped; each site's
//     readings of all dumps are merged as ingest.Read merges them (of two
//     readings at one instant the later file's wins) and cut by
//     features.Extract on a one-site dataset that has the channels of the
//     whole dataset, a side input, so that a site's windows and features
//     are exactly those of a local run. The windows are written, by shard
//     of sites, into the scratch folder Options.Work.
//  2. One pipeline per epoch: every shard is scaled and searched for
//     best-matching units against the codebook, a side input; the per-unit
//     counts and sums (mapper.Accumulator) of the shards are merged by a
//     combine and written for the driver, which applies
//     (*mapper.Map).Smooth with mapper.Sigma of the epoch.
//  3. Assignment: every shard is mapped onto the final codebook.
//
// The driver gathers the windows (small beside the readings), fits the
// normalisation (features.FitScaler), makes the initial codebook
// (mapper.InitMap) from the scaled windows, and after training builds the
// model with its regimes (model.New), decodes the timelines
// (timeline.Build) and returns a
// kinmap.Result, whose Write writes the same files as a local run.
//
// # Equality with a local run
//
// The windows, the feature table, the normalisation, the scaled matrix and
// the initial codebook are bit for bit those of kinmap.Train. A Beam combine
// merges the shards in an order of the runner's choosing, whereas a local
// epoch merges fixed blocks of rows in order, so the per-unit sums, and so
// the codebook, differ by floating-point reassociation only (far below
// 1e-9). Winners are decided by an exact distance with ties to the lower
// unit, so they stay the same unless two units are within rounding of each
// other for some window; the regimes and timelines are then identical.
package scaleout

import (
	"context"
	"errors"
	"fmt"
	"path"
	"slices"
	"strings"
	"time"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/runners/prism"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/transforms/stats"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/mapper"
	"github.com/kinmap/kinmap/model"
)

// DefaultShards is the number of window shards when Options.Shards is 0.
const DefaultShards = 16

// Options configures a run on Beam: the options of a local run, plus where
// the pipelines keep their intermediate files and how they are run.
type Options struct {
	kinmap.Options

	// Work is a folder that the driver and every worker can read and
	// write: a local folder for Prism, shared storage such as
	// gs://bucket/path or s3://bucket/path for a distributed runner. Each
	// run writes into a fresh subfolder of it.
	Work string

	Shards   int  // window shards; 0 means DefaultShards
	KeepWork bool // keep the run's subfolder of Work instead of removing it

	// Run executes one pipeline and waits for its end; nil runs it on
	// Prism in this process. A command usually passes beamx.Run, the runner
	// of the --runner flag.
	Run func(ctx context.Context, p *beam.Pipeline) error
}

// validate reports the first usage error in the options.
func (o *Options) validate() error {
	if err := o.Options.Validate(); err != nil {
		return err
	}
	switch {
	case o.Work == "":
		return usage("scaleout: no scratch folder: name one that every worker can reach (scaleout.Options.Work)")
	case o.Map.Rule != "" && o.Map.Rule != mapper.RuleBatch:
		return usage("scaleout: training rule %q: only the batch map runs on Beam", o.Map.Rule)
	case o.Shards < 0:
		return usage("scaleout: %d shards: must not be negative", o.Shards)
	}
	return nil
}

// run is the state of the driver during Train.
type run struct {
	o      Options
	dir    string // the run's scratch folder
	res    *kinmap.Result
	shards []shard // window shards with at least one window
	times  map[string]float64
	last   time.Time
}

// shard is one window shard and where its windows go in the table.
type shard struct {
	path  string
	sites []string // in shard order
}

// Train runs the whole pipeline on Beam: it reads the dumps, computes the
// window features, fits the normalisation, trains a new batch map, finds
// its regimes and decodes every site's timeline, like kinmap.Train. The
// online rule is refused (it updates the map after every window and does
// not distribute). A history folder is read and decoded from on the
// driver, as in a local run.
func Train(ctx context.Context, o Options) (*kinmap.Result, error) {
	if err := o.validate(); err != nil {
		return nil, err
	}
	if o.Shards == 0 {
		o.Shards = DefaultShards
	}
	r := &run{o: o, dir: newRunDir(o.Work), times: map[string]float64{}, last: time.Now()}
	r.res = kinmap.Begin("beam", o.Options)
	err := r.train(ctx)
	if !o.KeepWork {
		if rerr := removeRunDir(ctx, r.dir); err == nil && rerr != nil {
			err = fmt.Errorf("scaleout: removing the scratch folder %s: %w", r.dir, rerr)
		}
	}
	if err != nil {
		return nil, err
	}
	return r.res, nil
}

func (r *run) train(ctx context.Context) error {
	o, res := &r.o, r.res
	if err := r.readRegister(ctx); err != nil {
		return err
	}
	files, err := expand(ctx, o.Data)
	if err != nil {
		return err
	}
	r.logf("reading %d input(s) on Beam", len(files))
	if err := r.windows(ctx, files); err != nil {
		return err
	}
	r.lap("features")

	sc, err := res.Scale(o.Options)
	if err != nil {
		return err
	}
	m, cfg, err := mapper.InitMap(res.X, o.Map)
	if err != nil {
		return err
	}
	r.logf("training on %d windows × %d features, one pipeline per epoch", res.X.RawMatrix().Rows, len(sc.Names))
	shard := scaledShard{Names: res.Table.Names, Scaler: sc}
	for e := range cfg.Epochs {
		acc, qe, err := r.epoch(ctx, m, shard, e)
		if err != nil {
			return err
		}
		m.Smooth(acc, mapper.Sigma(cfg, e))
		r.logf("epoch %d: quantization error %.4f", e, qe/float64(res.X.RawMatrix().Rows))
	}
	r.lap("train")
	asg, err := r.assign(ctx, m, shard)
	if err != nil {
		return err
	}
	if res.Model, err = model.New(m, cfg, res.Table, res.X, sc, asg); err != nil {
		return err
	}
	r.lap("assign")
	if err := res.Conclude(o.Options, r.times); err != nil {
		return err
	}
	// The levels need each window's decoded regime, and the readings.
	if err := r.levels(ctx, files); err != nil {
		return err
	}
	r.lap("levels")
	return nil
}

// readRegister reads the site register on the driver; the workers read it
// again to place the windows of registered sites.
func (r *run) readRegister(ctx context.Context) error {
	if r.o.Sites == "" {
		return nil
	}
	local, done, err := localCopy(ctx, r.o.Sites)
	if err != nil {
		return err
	}
	defer done()
	reg, err := ingest.ReadRegister(local, r.o.Register)
	if err != nil {
		return asRemote(err, local, r.o.Sites)
	}
	r.res.Register = reg
	r.logf("register: %d sites from %s", len(reg.Sites), r.o.Sites)
	return nil
}

// windows runs the first pipeline and gathers its outcome: the summary of
// what was read and the feature table.
func (r *run) windows(ctx context.Context, files []string) error {
	o, res := &r.o, r.res
	p, s := beam.NewPipelineWithRoot()
	siteChunks, outcomes, err := readStage(s, o, files)
	if err != nil {
		return err
	}
	channels := beam.Combine(s, &channelsFn{}, outcomes)
	sites := beam.ParDo(s, &siteFn{Features: o.Features, Register: o.Sites, RegOpts: o.Register, Shards: o.Shards},
		beam.GroupByKey(s, siteChunks), beam.SideInput{Input: channels})
	beam.ParDo0(s, &shardFn{Dir: r.dir}, beam.GroupByKey(s, sites))
	beam.ParDo0(s, &outcomesFn{Dir: r.dir}, beam.GroupByKey(s, beam.AddFixedKey(s, outcomes)))
	if err := r.execute(ctx, p, "windows"); err != nil {
		return err
	}

	var outs []fileOutcome
	if err := readGob(ctx, join(r.dir, inputsFile), &outs); err != nil {
		return err
	}
	var channelList []string
	for _, out := range outs {
		if out.Err != "" {
			if out.Usage {
				return usage("%s", out.Err)
			}
			return errors.New(out.Err)
		}
		channelList = union(channelList, out.Channels)
	}
	// The feature list is checked against the channels as a local run
	// checks it, with the same message.
	empty, err := features.Extract(&ingest.Dataset{Channels: channelList}, o.Features)
	if err != nil {
		return kinmap.OptionError(err)
	}
	all, err := r.gatherShards(ctx)
	if err != nil {
		return err
	}
	if res.Ingest, err = mergeSummary(outs, all, res.Register); err != nil {
		return err
	}
	r.logf("%s", res.Ingest.String())
	res.Table = table(empty.Names, o.Features, all)
	if len(res.Table.Windows) == 0 {
		return &kinmap.NoWindowError{Reasons: res.Table.SkipReasons()}
	}
	r.logf("features: %d windows, %d features", len(res.Table.Windows), len(res.Table.Names))
	return nil
}

// gatherShards reads the window shards, notes those with windows, and
// returns the sites of all, sorted by site.
func (r *run) gatherShards(ctx context.Context) ([]siteResult, error) {
	paths, err := list(ctx, join(r.dir, windowsDir, "shard-*.gob"))
	if err != nil {
		return nil, err
	}
	var all []siteResult
	for _, path := range paths {
		var rs []siteResult
		if err := readGob(ctx, path, &rs); err != nil {
			return nil, err
		}
		sh := shard{path: path}
		n := 0
		for _, s := range rs {
			if s.Err != "" {
				return nil, fmt.Errorf("scaleout: site %q: %s", s.Site, s.Err)
			}
			sh.sites = append(sh.sites, s.Site)
			n += len(s.Windows)
		}
		if n > 0 {
			r.shards = append(r.shards, sh)
		}
		all = append(all, rs...)
	}
	slices.SortFunc(all, func(a, b siteResult) int { return strings.Compare(a.Site, b.Site) })
	return all, nil
}

// epoch runs the pipeline of one batch epoch on the codebook of m and
// returns its per-unit statistics and the sum of the quantization errors.
func (r *run) epoch(ctx context.Context, m *mapper.Map, sh scaledShard, e int) (*mapper.Accumulator, float64, error) {
	p, s := beam.NewPipelineWithRoot()
	codebook := beam.Create(s, *m)
	accs, qes := beam.ParDo2(s, &bmuFn{Shard: sh, Workers: r.o.Map.Workers}, r.shardList(s), beam.SideInput{Input: codebook})
	acc := beam.Combine(s, &accumulateFn{Units: m.Units(), Dim: m.Dim}, accs)
	path := join(r.dir, fmt.Sprintf(epochName, e))
	beam.ParDo0(s, &epochOutFn{Path: path}, acc, beam.SideInput{Input: stats.Sum(s, qes)})
	if err := r.execute(ctx, p, fmt.Sprintf("epoch %d", e)); err != nil {
		return nil, 0, err
	}
	var out epochResult
	if err := readGob(ctx, path, &out); err != nil {
		return nil, 0, err
	}
	if out.Acc.Units != m.Units() || out.Acc.Dim != m.Dim {
		return nil, 0, fmt.Errorf("scaleout: epoch %d: a %d×%d accumulator for a %d×%d map", e, out.Acc.Units, out.Acc.Dim, m.Units(), m.Dim)
	}
	return &out.Acc, out.QE, nil
}

// assign runs the assignment pipeline on the final codebook and places the
// assignments of every shard at its windows' rows of the table.
func (r *run) assign(ctx context.Context, m *mapper.Map, sh scaledShard) ([]mapper.Assignment, error) {
	p, s := beam.NewPipelineWithRoot()
	codebook := beam.Create(s, *m)
	beam.ParDo0(s, &assignFn{Shard: sh, Workers: r.o.Map.Workers, Dir: r.dir}, r.shardList(s), beam.SideInput{Input: codebook})
	if err := r.execute(ctx, p, "assignment"); err != nil {
		return nil, err
	}
	t := r.res.Table
	first := map[string]int{} // first row of each site in the table
	for i := len(t.Windows) - 1; i >= 0; i-- {
		first[t.Windows[i].Site] = i
	}
	out := make([]mapper.Assignment, len(t.Windows))
	placed := 0
	for _, sh := range r.shards {
		var asg []mapper.Assignment
		if err := readGob(ctx, join(r.dir, assignDir, path.Base(sh.path)), &asg); err != nil {
			return nil, err
		}
		k := 0
		for _, site := range sh.sites {
			i, ok := first[site]
			for ; ok && i < len(t.Windows) && t.Windows[i].Site == site; i++ {
				if k >= len(asg) {
					return nil, fmt.Errorf("scaleout: %s: %d assignments for more windows", sh.path, len(asg))
				}
				out[i] = asg[k]
				k++
			}
		}
		if k != len(asg) {
			return nil, fmt.Errorf("scaleout: %s: %d assignments for %d windows", sh.path, len(asg), k)
		}
		placed += k
	}
	if placed != len(out) {
		return nil, fmt.Errorf("scaleout: %d assignments for %d windows", placed, len(out))
	}
	return out, nil
}

// shardList is the PCollection of the window shards, spread over the
// workers.
func (r *run) shardList(s beam.Scope) beam.PCollection {
	paths := make([]string, len(r.shards))
	for i, sh := range r.shards {
		paths[i] = sh.path
	}
	return beam.Reshuffle(s, beam.CreateList(s, paths))
}

func (r *run) execute(ctx context.Context, p *beam.Pipeline, name string) error {
	exec := r.o.Run
	if exec == nil {
		exec = func(ctx context.Context, p *beam.Pipeline) error {
			_, err := prism.Execute(ctx, p)
			return err
		}
	}
	if err := exec(ctx, p); err != nil {
		return fmt.Errorf("scaleout: %s pipeline: %w", name, err)
	}
	return nil
}

func (r *run) lap(name string) {
	now := time.Now()
	r.times[name] += now.Sub(r.last).Seconds()
	r.last = now
}

func (r *run) logf(format string, a ...any) {
	if r.o.Log != nil {
		fmt.Fprintf(r.o.Log, format+"\n", a...)
	}
}
