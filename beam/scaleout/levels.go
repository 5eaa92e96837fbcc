package scaleout

import (
	"context"
	"encoding/json"
	"fmt"
	"slices"
	"time"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"

	"github.com/kinmap/kinmap/features"
)

// levelsDir holds the regime levels, one file per regime (or the fleet)
// and channel.
const levelsDir = "levels"

// siteGroups are the windows of every site with their level group
// (kinmap.Result.LevelGroups), the side input of levelFn.
type siteGroups struct {
	Sites    []string // sorted
	Starts   [][]int64
	Ends     [][]int64
	Groups   [][]int
	K        int
	Channels []string
}

// levelFn merges a site's readings as the read stage does and emits its
// readings in the windows of each level group, keyed by group and channel
// (group·channels + channel), as features.SiteReadings passes them.
type levelFn struct{}

func (f *levelFn) ProcessElement(site string, chunks func(*siteChunk) bool, sg siteGroups, emit func(int, []float64)) {
	i, ok := slices.BinarySearch(sg.Sites, site)
	if !ok {
		return
	}
	sd, _ := mergeSite(site, collect(chunks))
	ws := make([]features.Window, len(sg.Starts[i]))
	for j := range ws {
		ws[j] = features.Window{Site: site, Start: time.Unix(0, sg.Starts[i][j]).UTC(), End: time.Unix(0, sg.Ends[i][j]).UTC()}
	}
	features.SiteReadings(sd, ws, sg.Groups[i], sg.K, sg.Channels, func(g, c int, v []float64) {
		emit(g*len(sg.Channels)+c, slices.Clone(v))
	})
}

// levelRec is one level as levelOutFn writes it.
type levelRec struct {
	Key   int
	Level features.Level
}

// levelOutFn computes the level of one group and channel from all its
// readings and writes it to the scratch folder.
type levelOutFn struct {
	Dir      string
	Channels []string
}

func (f *levelOutFn) ProcessElement(ctx context.Context, key int, parts func(*[]float64) bool) error {
	var v []float64
	for _, p := range collect(parts) {
		v = append(v, p...)
	}
	rec := levelRec{Key: key, Level: features.LevelOf(f.Channels[key%len(f.Channels)], v)}
	return writeGob(ctx, join(f.Dir, levelsDir, fmt.Sprintf("level-%06d.gob", key)), rec)
}

// levels computes the typical levels of the channels in each decoded
// regime on Beam, reading the dumps a second time, as a local run computes
// them on the dataset it read, and sets them on the result.
func (r *run) levels(ctx context.Context, files []string) error {
	o, res := &r.o, r.res
	group, k := res.LevelGroups()
	sg := siteGroups{K: k, Channels: features.Channels(res.Model.FeatureNames)}
	for i, w := range res.Table.Windows {
		if n := len(sg.Sites); n == 0 || sg.Sites[n-1] != w.Site {
			sg.Sites = append(sg.Sites, w.Site)
			sg.Starts, sg.Ends, sg.Groups = append(sg.Starts, nil), append(sg.Ends, nil), append(sg.Groups, nil)
		}
		n := len(sg.Sites) - 1
		sg.Starts[n] = append(sg.Starts[n], w.Start.UnixNano())
		sg.Ends[n] = append(sg.Ends[n], w.End.UnixNano())
		sg.Groups[n] = append(sg.Groups[n], group[i])
	}
	p, s := beam.NewPipelineWithRoot()
	siteChunks, _, err := readStage(s, o, files)
	if err != nil {
		return err
	}
	vals := beam.ParDo(s, &levelFn{}, beam.GroupByKey(s, siteChunks), beam.SideInput{Input: beam.Create(s, sg)})
	beam.ParDo0(s, &levelOutFn{Dir: r.dir, Channels: sg.Channels}, beam.GroupByKey(s, vals))
	if err := r.execute(ctx, p, "levels"); err != nil {
		return err
	}
	paths, err := list(ctx, join(r.dir, levelsDir, "level-*.gob"))
	if err != nil {
		return err
	}
	got := map[int]features.Level{}
	for _, path := range paths {
		var rec levelRec
		if err := readGob(ctx, path, &rec); err != nil {
			return err
		}
		got[rec.Key] = rec.Level
	}
	level := func(g, c int) features.Level {
		if l, ok := got[g*len(sg.Channels)+c]; ok {
			return l
		}
		return features.LevelOf(sg.Channels[c], nil)
	}
	byGroup := make([][]features.Level, k+1)
	for g := range byGroup {
		for c := range sg.Channels {
			byGroup[g] = append(byGroup[g], level(g, c))
		}
	}
	res.SetLevels(&o.Options, byGroup[:k], byGroup[k])
	return nil
}

// readStage adds the reading of the dumps to a pipeline: the chunks of
// each site's readings, keyed by site, and each file's outcome.
func readStage(s beam.Scope, o *Options, files []string) (siteChunks, outcomes beam.PCollection, err error) {
	refs := make([]fileRef, len(files))
	for i, f := range files {
		refs[i] = fileRef{Index: i, Path: f}
	}
	in := o.Ingest
	in.Register = nil
	inJSON, err := json.Marshal(in)
	if err != nil {
		return beam.PCollection{}, beam.PCollection{}, err
	}
	siteChunks, outcomes = beam.ParDo2(s, &readFn{Ingest: inJSON}, beam.Reshuffle(s, beam.CreateList(s, refs)))
	return siteChunks, outcomes, nil
}
