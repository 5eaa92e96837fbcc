// Command kinmap maps the behaviour of a sensor fleet: which sites behave
// alike, which operating regime each site is in and which sites switched
// regime. Run "kinmap help" for the commands and "kinmap CMD -h" for their
// options.
//
// kinmap is an analysis aid, not a protective or control function.
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"github.com/kinmap/kinmap"
)

// Exit statuses.
const (
	exitOK    = 0
	exitData  = 1
	exitUsage = 2
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// command is one subcommand of kinmap.
type command struct {
	name    string
	summary string
	usage   string // the synopsis line
	example string
	run     func(args []string, env *env) error
}

// env is what a command writes to.
type env struct {
	stdout, stderr io.Writer
	terminal       bool // stderr is a terminal, so progress is shown
}

func commands() []command {
	return []command{
		{"run", "train a map on dumps and write all outputs", "kinmap run --data FILES... [--sites FILE] --out DIR [options]",
			"kinmap run --data 'week48/*.parquet' --sites sites.csv --out week48-map", runCmd},
		{"assign", "map a new dump onto an existing model, without training", "kinmap assign --model FILE --data FILES... --out DIR [options]",
			"kinmap assign --model week48-map/model --data 'week49/*.parquet' --sites sites.csv --out week49", assignCmd},
		{"update", "continue training a model on a new dump, keeping regime numbers", "kinmap update --model FILE --data FILES... --out DIR [options]",
			"kinmap update --model week48-map/model --data 'week49/*.parquet' --out week49", updateCmd},
		{"demo", "generate the pumping-station scenario and map it", "kinmap demo [--out DIR]",
			"kinmap demo --out kinmap-demo", demoCmd},
		{"scenario", "write a synthetic fleet with known ground truth", "kinmap scenario NAME --out DIR [--sites N] [--weeks W] [--seed S]",
			"kinmap scenario pumping --out fleet --sites 100 --weeks 2", scenarioCmd},
		{"help", "show the commands, or the options of one", "kinmap help [CMD]", "kinmap help run", nil},
	}
}

func run(args []string, stdout, stderr io.Writer) int {
	e := &env{stdout: stdout, stderr: stderr, terminal: isTerminal(stderr)}
	if len(args) == 0 {
		overview(stderr)
		return exitUsage
	}
	name, rest := args[0], args[1:]
	if name == "help" || name == "-h" || name == "--help" || name == "-help" {
		if len(rest) == 0 {
			overview(stdout)
			return exitOK
		}
		name, rest = rest[0], []string{"-h"}
	}
	for _, c := range commands() {
		if c.name != name || c.run == nil {
			continue
		}
		err := c.run(rest, e)
		switch {
		case err == nil:
			return exitOK
		case errors.Is(err, flag.ErrHelp):
			return exitOK
		case kinmap.IsUsage(err):
			fmt.Fprintf(stderr, "kinmap %s: %v\nRun 'kinmap %s -h' for its options.\n", name, err, name)
			return exitUsage
		default:
			fmt.Fprintf(stderr, "kinmap %s: %v\n", name, err)
			return exitData
		}
	}
	fmt.Fprintf(stderr, "kinmap: unknown command %q\n\n", name)
	overview(stderr)
	return exitUsage
}

func overview(w io.Writer) {
	fmt.Fprintln(w, "kinmap maps the behaviour of a sensor fleet: which sites behave alike, which")
	fmt.Fprintln(w, "operating regime each site is in, and which sites switched regime.")
	fmt.Fprintln(w, "It is an analysis aid, not a protective or control function.")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Commands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-9s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Start with 'kinmap demo'. Run 'kinmap CMD -h' for the options of a command.")
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}
