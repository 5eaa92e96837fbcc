package main

import (
	"flag"
	"io"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/beam/scaleout"
	"github.com/kinmap/kinmap/internal/cli"
)

// command describes kinmap-beam for its usage text.
var command = cli.Command{
	Name:    "kinmap-beam",
	Summary: "train a map of a sensor fleet on Apache Beam and write all outputs",
	Usage:   "kinmap-beam --data FILES... [--sites FILE] --out DIR [--work DIR] [options] [Beam flags]",
	Example: "kinmap-beam --data 'gs://fleet/week48/*.parquet' --out week48-map --work gs://fleet/tmp --runner=universal --endpoint=localhost:8099",
}

// cmdline holds the command's flags: those of "kinmap run", then the Beam
// path's own, registered on a flag set next to Beam's (--runner,
// --endpoint, --environment_type, ...).
type cmdline struct {
	flags *cli.Flags
	o     scaleout.Options
	out   cli.Outputs
}

// newCLI registers the command's flags on fs.
func newCLI(fs *flag.FlagSet) *cmdline {
	c := &cmdline{o: scaleout.Options{Options: kinmap.DefaultOptions()}}
	f := cli.New(command, fs)
	o := &c.o.Options
	f.Input(o)
	f.Features(o)
	f.Map(o, true)
	f.Timeline(o)
	f.WorkList(o)
	f.Output(o, &c.out, "also write the model to `FILE` (it is always written to DIR/model)")
	f.Section("Beam")
	f.Str(&c.o.Work, "work", "", "scratch `DIR` every worker and the driver can reach (gs://…, s3://… or a shared folder); default a local temporary folder, for Prism in this process only")
	f.Int(&c.o.Shards, "shards", scaleout.DefaultShards, "`N` window shards: the parallelism of the training epochs")
	f.Bool(&c.o.KeepWork, "keep-work", false, "keep the run's scratch files")
	c.flags = f
	return c
}

// parse parses args; asked for help, it writes the usage text to help.
func (c *cmdline) parse(args []string, help io.Writer) error {
	return c.flags.Parse(args, help)
}

// finish completes the options after parsing: the remaining arguments are
// more dumps, and --out must be given.
func (c *cmdline) finish() (scaleout.Options, error) {
	o := c.o
	err := c.flags.Finish(&o.Options, &c.out, false)
	return o, err
}
