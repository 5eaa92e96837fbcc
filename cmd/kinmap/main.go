// Command kinmap maps the behaviour of a sensor fleet: which sites behave
// alike, which operating regime each site is in and which sites switched
// regime. Run "kinmap help" for the commands and "kinmap CMD -h" for their
// options.
//
// kinmap is an analysis aid, not a protective or control function.
package main

import (
	"fmt"
	"io"
	"os"

	"github.com/kinmap/kinmap/internal/cli"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// command is one subcommand of kinmap.
type command struct {
	cli.Command
	run func(args []string, env *env) error
}

// env is what a command writes to.
type env struct {
	stdout, stderr io.Writer
	terminal       bool // stderr is a terminal, so progress is shown
}

func commands() []command {
	return []command{
		{cli.Command{Name: "run", Summary: "train a map on dumps and write all outputs", Usage: "kinmap run --data FILES... [--sites FILE] --out DIR [options]",
			Example: "kinmap run --data 'week48/*.parquet' --sites sites.csv --out week48-map"}, runCmd},
		{cli.Command{Name: "assign", Summary: "map a new dump onto an existing model, without training", Usage: "kinmap assign --model FILE --data FILES... --out DIR [options]",
			Example: "kinmap assign --model week48-map/model --data 'week49/*.parquet' --sites sites.csv --out week49"}, assignCmd},
		{cli.Command{Name: "update", Summary: "continue training a model on a new dump, keeping regime numbers", Usage: "kinmap update --model FILE --data FILES... --out DIR [options]",
			Example: "kinmap update --model week48-map/model --data 'week49/*.parquet' --out week49"}, updateCmd},
		{cli.Command{Name: "label", Summary: "name regimes and mark them normal, watch or fault", Usage: "kinmap label --model FILE [--file CSV]",
			Example: "kinmap label --model week48-map/model > regimes.csv; kinmap label --model week48-map/model --file regimes.csv"}, labelCmd},
		{cli.Command{Name: "demo", Summary: "generate the pumping-station scenario and map it", Usage: "kinmap demo [--out DIR]",
			Example: "kinmap demo --out kinmap-demo"}, demoCmd},
		{cli.Command{Name: "scenario", Summary: "write a synthetic fleet with known ground truth", Usage: "kinmap scenario NAME --out DIR [--sites N] [--weeks W] [--seed S]",
			Example: "kinmap scenario pumping --out fleet --sites 100 --weeks 2"}, scenarioCmd},
		{cli.Command{Name: "score", Summary: "score an output folder against a known truth", Usage: "kinmap score --out DIR --truth PATH [--tolerance 1d] [--json]",
			Example: "kinmap score --out week23 --truth kinmap-demo/data --tolerance 1d"}, scoreCmd},
		{cli.Command{Name: "help", Summary: "show the commands, or the options of one", Usage: "kinmap help [CMD]", Example: "kinmap help run"}, nil},
	}
}

func run(args []string, stdout, stderr io.Writer) int {
	return dispatch(args, &env{stdout: stdout, stderr: stderr, terminal: isTerminal(stderr)})
}

// dispatch runs the command that args[0] names with the rest of args and
// returns its exit status.
func dispatch(args []string, e *env) int {
	if len(args) == 0 {
		overview(e.stderr)
		return cli.ExitUsage
	}
	name, rest := args[0], args[1:]
	if name == "help" || name == "-h" || name == "--help" || name == "-help" {
		switch len(rest) {
		case 0:
			overview(e.stdout)
			return cli.ExitOK
		case 1:
			if rest[0] == "help" {
				overview(e.stdout)
				return cli.ExitOK
			}
			if rest[0] == "features" {
				featuresHelp(e.stdout)
				return cli.ExitOK
			}
			name, rest = rest[0], []string{"-h"}
		default:
			return cli.Status(e.stderr, "kinmap help", cli.UsageError("unexpected arguments %q: help takes one command name", rest[1:]))
		}
	}
	for _, c := range commands() {
		if c.Name != name || c.run == nil {
			continue
		}
		return cli.Status(e.stderr, "kinmap "+name, c.run(rest, e))
	}
	fmt.Fprintf(e.stderr, "kinmap: unknown command %q\n\n", name)
	overview(e.stderr)
	return cli.ExitUsage
}

func overview(w io.Writer) {
	fmt.Fprintln(w, "kinmap maps the behaviour of a sensor fleet: which sites behave alike, which")
	fmt.Fprintln(w, "operating regime each site is in, and which sites switched regime.")
	fmt.Fprintln(w, "It is an analysis aid, not a protective or control function.")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Commands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-9s %s\n", c.Name, c.Summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Start with 'kinmap demo'. Run 'kinmap CMD -h' for the options of a command,")
	fmt.Fprintln(w, "'kinmap help features' for what each feature statistic means.")
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}
