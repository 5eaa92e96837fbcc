// Package cli holds what the kinmap commands share on their command lines:
// the option flags of a run, their value types and the usage text.
package cli

import (
	"flag"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/kinmap/kinmap"
)

// Command describes a command for its usage text.
type Command struct {
	Name    string
	Summary string
	Usage   string // the synopsis line
	Example string
}

// Flags is a command's flag set with the usage text kinmap prints: options
// in titled groups, each with its default, and an example.
type Flags struct {
	*flag.FlagSet
	Command Command
	groups  []group           // option groups in the order shown
	hooks   []func()          // run after a successful parse
	renamed map[string]string // flag names of earlier releases: what to give now
	nonZero map[string]string // flags whose explicit 0 is refused: the range allowed
}

// After registers a function that turns parsed flag values into options.
func (f *Flags) After(hook func()) { f.hooks = append(f.hooks, hook) }

// Renamed registers old, a flag name of an earlier release, as refused with
// a usage error that says what to give now, for example "cells (hex or
// square)".
func (f *Flags) Renamed(old, now string) {
	if f.renamed == nil {
		f.renamed = map[string]string{}
	}
	f.renamed[old] = now
}

// NonZero refuses an explicit 0 for the flag name, whose library field
// takes 0 as its default: given on the command line, 0 would silently mean
// the default. want is the range allowed, in words, as the library's
// errors give it, such as "in (0, 1]".
func (f *Flags) NonZero(name, want string) {
	if f.nonZero == nil {
		f.nonZero = map[string]string{}
	}
	f.nonZero[name] = want
}

// checkNonZero refuses the first flag set to 0 that NonZero registered.
func (f *Flags) checkNonZero() error {
	var err error
	f.Visit(func(fl *flag.Flag) {
		want, ok := f.nonZero[fl.Name]
		if !ok || err != nil {
			return
		}
		if g, ok := fl.Value.(flag.Getter); ok && (g.Get() == 0 || g.Get() == 0.0) {
			err = UsageError("--%s 0: want a value %s", fl.Name, want)
		}
	})
	return err
}

// checkRenamed refuses the first flag of args that Renamed registered.
func (f *Flags) checkRenamed(args []string) error {
	for _, a := range args {
		if a == "--" {
			break
		}
		name, ok := strings.CutPrefix(a, "-")
		if !ok {
			continue
		}
		name, _, _ = strings.Cut(strings.TrimPrefix(name, "-"), "=")
		if now, ok := f.renamed[name]; ok {
			return UsageError("--%s is now --%s", name, now)
		}
	}
	return nil
}

type group struct {
	title string
	names []string
}

// New returns the flags of command c on fs, or on a new flag set of its
// own when fs is nil, whose errors the caller reports.
func New(c Command, fs *flag.FlagSet) *Flags {
	if fs == nil {
		fs = flag.NewFlagSet(c.Name, flag.ContinueOnError)
		fs.SetOutput(io.Discard) // errors are reported by the caller, usage by PrintUsage
		fs.Usage = func() {}
	}
	return &Flags{FlagSet: fs, Command: c}
}

// Section starts a new group of options in the usage text.
func (f *Flags) Section(title string) { f.groups = append(f.groups, group{title: title}) }

func (f *Flags) note(name string) {
	g := &f.groups[len(f.groups)-1]
	g.names = append(g.names, name)
}

// Str registers a flag in the current group.
func (f *Flags) Str(p *string, name, def, help string) {
	f.StringVar(p, name, def, help)
	f.note(name)
}

// Num registers a flag of a finite number in the current group.
func (f *Flags) Num(p *float64, name string, def float64, help string) {
	*p = def
	f.Value(numValue{p}, name, help)
}

// Int registers a flag in the current group.
func (f *Flags) Int(p *int, name string, def int, help string) {
	f.IntVar(p, name, def, help)
	f.note(name)
}

// Bool registers a flag in the current group.
func (f *Flags) Bool(p *bool, name string, def bool, help string) {
	f.BoolVar(p, name, def, help)
	f.note(name)
}

// Duration registers, in the current group, a length flag that accepts d
// and w suffixes as well as Go durations; its default is *p.
func (f *Flags) Duration(p *time.Duration, name, help string) {
	f.Value(durationValue{p}, name, help)
}

// Value registers a flag in the current group.
func (f *Flags) Value(v flag.Value, name, help string) {
	f.Var(v, name, help)
	f.note(name)
}

// Parse parses args, first splitting "--data a b c" into one --data per
// file, so that a shell-expanded glob works. A flag name of an earlier
// release (Renamed) is refused before anything is parsed, and an explicit 0
// that would mean the default (NonZero) after. Asked for help, it prints the
// usage text to help and returns flag.ErrHelp; other errors are usage
// errors.
func (f *Flags) Parse(args []string, help io.Writer) error {
	if err := f.checkRenamed(args); err != nil {
		return err
	}
	if err := f.FlagSet.Parse(SpreadMulti(args, "data")); err != nil {
		if err == flag.ErrHelp {
			f.PrintUsage(help)
			return err
		}
		return UsageError("%v", err)
	}
	if err := f.checkNonZero(); err != nil {
		return err
	}
	for _, h := range f.hooks {
		h()
	}
	return nil
}

// UsageError is a usage error of the command line: the commands exit with
// status 2 for it.
func UsageError(format string, a ...any) error {
	return &kinmap.UsageError{Err: fmt.Errorf(format, a...)}
}

// SpreadMulti rewrites "--name a b c" as "--name=a --name=b --name=c".
func SpreadMulti(args []string, name string) []string {
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

// PrintUsage writes the usage text: synopsis, options by group with their
// defaults, and the example. A flag's default is shown as "(default X)"
// unless its help text already says "(default ...)".
func (f *Flags) PrintUsage(w io.Writer) {
	fmt.Fprintf(w, "%s: %s\n\nUsage:\n  %s\n", f.Command.Name, f.Command.Summary, f.Command.Usage)
	for _, g := range f.groups {
		fmt.Fprintf(w, "\n%s:\n", g.title)
		for _, name := range g.names {
			fl := f.Lookup(name)
			arg, help := flag.UnquoteUsage(fl)
			left := "  --" + name
			if arg != "" {
				left += " " + strings.ToUpper(arg)
			}
			// A help text that states its default itself is not given a
			// second, contradicting one from the flag's zero value.
			if def := fl.DefValue; def != "" && def != "false" && !strings.Contains(help, "(default") {
				help += " (default " + def + ")"
			}
			if len(left) < 26 {
				fmt.Fprintf(w, "%-26s %s\n", left, help)
			} else {
				fmt.Fprintf(w, "%s\n%26s %s\n", left, "", help)
			}
		}
	}
	fmt.Fprintf(w, "\nExample:\n  %s\n", f.Command.Example)
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
	return FormatDuration(*d.p)
}

func (d durationValue) Set(s string) error {
	v, err := parseDuration(s)
	if err != nil {
		return err
	}
	*d.p = v
	return nil
}

func (d durationValue) Get() any { return *d.p }

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
		if !ok || err != nil || !(v >= 0) || math.IsInf(v, 1) {
			return fmt.Errorf("weight %q: want FEATURE=WEIGHT with a weight ≥ 0, for example flow.mean=2", part)
		}
		(*w.p)[strings.TrimSpace(name)] = v
	}
	return nil
}

func (w weightsValue) Get() any { return *w.p }

// numValue is a float64 flag that refuses NaN and infinities, which no
// option means and which pass every range check written as v < lo.
type numValue struct{ p *float64 }

func (n numValue) String() string {
	if n.p == nil {
		return ""
	}
	return strconv.FormatFloat(*n.p, 'g', -1, 64)
}

func (n numValue) Set(s string) error {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%q: want a finite number", s)
	}
	*n.p = v
	return nil
}

func (n numValue) Get() any { return *n.p }

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
