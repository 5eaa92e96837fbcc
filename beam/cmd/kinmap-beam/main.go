// Command kinmap-beam trains kinmap's map of a sensor fleet on Apache Beam,
// for fleets whose readings outgrow one machine, and writes the same output
// folder as "kinmap run". It takes the data, feature, map and timeline
// options of "kinmap run" and Beam's own flags:
//
//	kinmap-beam --data 'gs://fleet/week48/*.parquet' --sites gs://fleet/sites.csv \
//	    --out week48-map --work gs://fleet/tmp \
//	    --runner=universal --endpoint=localhost:8099 --environment_type=DOCKER
//
// Without --runner the pipelines run on Prism in this process. See
// beam/README.md for submitting to Flink, Spark or Dataflow.
//
// kinmap is an analysis aid, not a protective or control function.
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"os"
	"strings"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/s3" // s3:// paths; beamx brings gs://
	"github.com/apache/beam/sdks/v2/go/pkg/beam/options/jobopts"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/runners"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/x/beamx"

	"github.com/kinmap/kinmap/beam/scaleout"
	"github.com/kinmap/kinmap/internal/cli"
)

func main() {
	beamFlags := map[string]bool{} // registered by Beam's packages at init
	flag.VisitAll(func(f *flag.Flag) { beamFlags[f.Name] = true })
	c := newCLI(flag.CommandLine)
	flag.Usage = func() { usage(c, flag.CommandLine.Output(), beamFlags) }
	// flag.CommandLine exits on its own errors; a flag of an earlier release
	// is refused before it parses.
	if err := c.parse(os.Args[1:], os.Stdout); err != nil {
		os.Exit(cli.Status(os.Stderr, "kinmap-beam", err))
	}
	beam.Init() // on a worker this runs the SDK harness and does not return
	os.Exit(c.run(context.Background(), os.Stdout, os.Stderr))
}

// run trains and writes the outputs, reporting errors as kinmap does.
func (c *cmdline) run(ctx context.Context, stdout, stderr io.Writer) int {
	return cli.Status(stderr, "kinmap-beam", c.train(ctx, stdout, stderr))
}

func (c *cmdline) train(ctx context.Context, stdout, stderr io.Writer) error {
	o, err := c.finish()
	if err != nil {
		return err
	}
	if *jobopts.Async {
		return cli.UsageError("--async: the driver needs every pipeline's result before it starts the next")
	}
	if o.Work == "" {
		if !inProcess() {
			return cli.UsageError("runner %q: name a scratch folder that every worker can reach with --work (gs://…, s3://… or a shared folder)", *runners.Runner)
		}
		dir, err := os.MkdirTemp("", "kinmap-beam-")
		if err != nil {
			return err
		}
		defer os.RemoveAll(dir)
		o.Work = dir
		// Beam leaves an empty placeholder in the temporary folder for
		// every loopback run: keep them in the scratch folder.
		os.Setenv("TMPDIR", dir)
	}
	if c.out.Quiet {
		// Beam's runners report through the default structured logger.
		slog.SetDefault(slog.New(slog.NewTextHandler(stderr, &slog.HandlerOptions{Level: slog.LevelWarn})))
	} else {
		o.Log = stderr
	}
	o.Run = beamx.Run
	res, err := scaleout.Train(ctx, o)
	if err != nil {
		return err
	}
	if err := cli.Write(res, &o.Options, &c.out); err != nil {
		return err
	}
	cli.Report(stdout, stderr, res, c.out.Out)
	return nil
}

// usage writes the command's own options, then Beam's.
func usage(c *cmdline, w io.Writer, beamFlags map[string]bool) {
	c.flags.PrintUsage(w)
	fmt.Fprintf(w, "\nBeam flags (runner, job endpoint, SDK harness environment):\n")
	flag.CommandLine.VisitAll(func(f *flag.Flag) {
		if !beamFlags[f.Name] {
			return
		}
		name, help := flag.UnquoteUsage(f)
		fmt.Fprintf(w, "  --%s\n    \t%s", strings.TrimSpace(f.Name+" "+name), help)
		if f.DefValue != "" && f.DefValue != "0" && f.DefValue != "false" {
			fmt.Fprintf(w, " (default %s)", f.DefValue)
		}
		fmt.Fprintln(w)
	})
}

// inProcess reports whether the pipelines run in this process (Prism
// without a job endpoint), where a local scratch folder will do.
func inProcess() bool {
	r := *runners.Runner
	return (r == "" || r == "prism" || r == "PrismRunner") && *jobopts.Endpoint == ""
}
