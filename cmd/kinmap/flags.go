package main

import (
	"flag"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
)

// flags is a command's flag set with the usage text kinmap prints.
type flags struct {
	*flag.FlagSet
	cmd    command
	groups []group  // option groups in the order shown
	hooks  []func() // run after a successful parse
}

// after registers a function that turns parsed flag values into options.
func (f *flags) after(hook func()) { f.hooks = append(f.hooks, hook) }

type group struct {
	title string
	names []string
}

func newFlags(c command) *flags {
	f := &flags{FlagSet: flag.NewFlagSet(c.name, flag.ContinueOnError), cmd: c}
	f.SetOutput(io.Discard) // errors are reported by run, usage by printUsage
	f.Usage = func() {}
	return f
}

// section starts a new group of options in the usage text.
func (f *flags) section(title string) { f.groups = append(f.groups, group{title: title}) }

func (f *flags) note(name string) {
	g := &f.groups[len(f.groups)-1]
	g.names = append(g.names, name)
}

func (f *flags) str(p *string, name, def, help string) {
	f.StringVar(p, name, def, help)
	f.note(name)
}

func (f *flags) num(p *float64, name string, def float64, help string) {
	f.Float64Var(p, name, def, help)
	f.note(name)
}

func (f *flags) integer(p *int, name string, def int, help string) {
	f.IntVar(p, name, def, help)
	f.note(name)
}

func (f *flags) boolean(p *bool, name string, def bool, help string) {
	f.BoolVar(p, name, def, help)
	f.note(name)
}

func (f *flags) value(v flag.Value, name, help string) {
	f.Var(v, name, help)
	f.note(name)
}

// parse parses args, first splitting "--data a b c" into one --data per
// file, so that a shell-expanded glob works.
func (f *flags) parse(args []string, e *env) error {
	if err := f.Parse(spreadMulti(args, "data")); err != nil {
		if err == flag.ErrHelp {
			f.printUsage(e.stdout)
			return err
		}
		return usageErr("%v", err)
	}
	for _, h := range f.hooks {
		h()
	}
	return nil
}

// usageErr is a usage error of the command line.
func usageErr(format string, a ...any) error {
	return &kinmap.UsageError{Err: fmt.Errorf(format, a...)}
}

// spreadMulti rewrites "--name a b c" as "--name=a --name=b --name=c".
func spreadMulti(args []string, name string) []string {
	var out []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a != "-"+name && a != "--"+name {
			out = append(out, a)
			continue
		}
		n := 0
		for i+1 < len(args) && !strings.HasPrefix(args[i+1], "-") {
			i++
			out = append(out, "--"+name+"="+args[i])
			n++
		}
		if n == 0 {
			out = append(out, a) // let the flag package report the missing value
		}
	}
	return out
}

func (f *flags) printUsage(w io.Writer) {
	fmt.Fprintf(w, "%s: %s\n\nUsage:\n  %s\n", f.cmd.name, f.cmd.summary, f.cmd.usage)
	for _, g := range f.groups {
		fmt.Fprintf(w, "\n%s:\n", g.title)
		for _, name := range g.names {
			fl := f.Lookup(name)
			arg, help := flag.UnquoteUsage(fl)
			left := "  --" + name
			if arg != "" {
				left += " " + strings.ToUpper(arg)
			}
			def := fl.DefValue
			if def != "" && def != "false" {
				help += " (default " + def + ")"
			}
			if len(left) < 26 {
				fmt.Fprintf(w, "%-26s %s\n", left, help)
			} else {
				fmt.Fprintf(w, "%s\n%26s %s\n", left, "", help)
			}
		}
	}
	fmt.Fprintf(w, "\nExample:\n  %s\n", f.cmd.example)
}

// listValue is a repeatable or comma-separated list flag.
type listValue struct {
	p     *[]string
	comma bool
}

func (l listValue) String() string {
	if l.p == nil {
		return ""
	}
	return strings.Join(*l.p, ",")
}

func (l listValue) Set(s string) error {
	if !l.comma {
		*l.p = append(*l.p, s)
		return nil
	}
	for _, part := range strings.Split(s, ",") {
		if part = strings.TrimSpace(part); part != "" {
			*l.p = append(*l.p, part)
		}
	}
	return nil
}

func (l listValue) Get() any { return *l.p }

// durationValue is a duration flag that accepts d and w suffixes.
type durationValue struct{ p *time.Duration }

func (d durationValue) String() string {
	if d.p == nil || *d.p == 0 {
		return ""
	}
	return formatDuration(*d.p)
}

func (d durationValue) Set(s string) error {
	v, err := features.ParseDuration(s)
	if err != nil {
		return err
	}
	*d.p = v
	return nil
}

func (d durationValue) Get() any { return *d.p }

// formatDuration writes whole weeks and days with their suffixes.
func formatDuration(d time.Duration) string {
	const day = 24 * time.Hour
	switch {
	case d%(7*day) == 0:
		return strconv.Itoa(int(d/(7*day))) + "w"
	case d%day == 0:
		return strconv.Itoa(int(d/day)) + "d"
	}
	return d.String()
}

// gridValue is a COLSxROWS flag.
type gridValue struct{ cols, rows *int }

func (g gridValue) String() string {
	if g.cols == nil || *g.cols == 0 {
		return ""
	}
	return fmt.Sprintf("%dx%d", *g.cols, *g.rows)
}

func (g gridValue) Set(s string) error {
	c, r, ok := strings.Cut(strings.ToLower(s), "x")
	cols, err1 := strconv.Atoi(c)
	rows, err2 := strconv.Atoi(r)
	if !ok || err1 != nil || err2 != nil || cols < 1 || rows < 1 {
		return fmt.Errorf("grid %q: want COLSxROWS, for example 30x20", s)
	}
	*g.cols, *g.rows = cols, rows
	return nil
}

func (g gridValue) Get() any { return g.String() }

// weightsValue is a NAME=W,NAME=W flag.
type weightsValue struct{ p *map[string]float64 }

func (w weightsValue) String() string {
	if w.p == nil || len(*w.p) == 0 {
		return ""
	}
	var parts []string
	for k, v := range *w.p {
		parts = append(parts, k+"="+strconv.FormatFloat(v, 'g', -1, 64))
	}
	sort.Strings(parts)
	return strings.Join(parts, ",")
}

func (w weightsValue) Set(s string) error {
	if *w.p == nil {
		*w.p = map[string]float64{}
	}
	for _, part := range strings.Split(s, ",") {
		name, val, ok := strings.Cut(part, "=")
		v, err := strconv.ParseFloat(val, 64)
		if !ok || err != nil || v < 0 {
			return fmt.Errorf("weight %q: want FEATURE=WEIGHT with a weight ≥ 0, for example flow.mean=2", part)
		}
		(*w.p)[strings.TrimSpace(name)] = v
	}
	return nil
}

func (w weightsValue) Get() any { return *w.p }

// choiceValue is a string flag limited to some values.
type choiceValue struct {
	p       *string
	choices []string
}

func (c choiceValue) String() string {
	if c.p == nil {
		return ""
	}
	return *c.p
}

func (c choiceValue) Set(s string) error {
	for _, ok := range c.choices {
		if s == ok {
			*c.p = s
			return nil
		}
	}
	return fmt.Errorf("%q: want one of %s", s, strings.Join(c.choices, ", "))
}

func (c choiceValue) Get() any { return *c.p }
