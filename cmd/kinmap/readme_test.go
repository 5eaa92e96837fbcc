package main

import (
	"flag"
	"fmt"
	"os"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/internal/cli"
)

// optionRow is one row of the README's table of options.
type optionRow struct {
	line  int      // line number in the README
	flags []string // flag names, without dashes
	def   string   // the default cell
}

// literalDefaults matches a default cell made only of code spans, one per
// flag of the row: "`site`, `time`".
var literalDefaults = regexp.MustCompile("^`[^`]*`(, `[^`]*`)*$")

// optionsTable returns the rows of the table of options, the first table
// with the header option | default | meaning in the section of a README
// under heading; other tables there are passed over.
func optionsTable(readme, heading string) ([]optionRow, error) {
	lines := strings.Split(readme, "\n")
	start := slices.Index(lines, heading)
	if start < 0 {
		return nil, fmt.Errorf("no heading %q", heading)
	}
	var rows []optionRow
	inTable, options := false, false
	for i := start + 1; i < len(lines); i++ {
		line := strings.TrimSpace(lines[i])
		if strings.HasPrefix(line, "#") {
			break
		}
		if !strings.HasPrefix(line, "|") {
			if options {
				break
			}
			inTable = false
			continue
		}
		cells := tableCells(line)
		if !inTable {
			inTable = true
			options = len(cells) == 3 && cells[0] == "option" && cells[1] == "default" && cells[2] == "meaning"
			continue
		}
		if !options || strings.HasPrefix(cells[0], "---") {
			continue
		}
		if len(cells) != 3 {
			return nil, fmt.Errorf("line %d: %d cells, want 3", i+1, len(cells))
		}
		row := optionRow{line: i + 1, def: cells[1]}
		for _, span := range codeSpans(cells[0]) {
			if name, ok := strings.CutPrefix(strings.Fields(span)[0], "--"); ok {
				row.flags = append(row.flags, name)
			}
		}
		if len(row.flags) == 0 {
			return nil, fmt.Errorf("line %d: names no --flag", i+1)
		}
		rows = append(rows, row)
	}
	if len(rows) == 0 {
		return nil, fmt.Errorf("no table of options (option | default | meaning) under %q", heading)
	}
	return rows, nil
}

// tableCells splits a Markdown table row at the bars that are not escaped.
func tableCells(line string) []string {
	const bar = "\x00"
	line = strings.ReplaceAll(line, `\|`, bar)
	line = strings.TrimSuffix(strings.TrimPrefix(line, "|"), "|")
	var cells []string
	for c := range strings.SplitSeq(line, "|") {
		cells = append(cells, strings.ReplaceAll(strings.TrimSpace(c), bar, "|"))
	}
	return cells
}

// codeSpans returns the text of the `code spans` of s.
func codeSpans(s string) []string {
	parts := strings.Split(s, "`")
	var spans []string
	for i := 1; i < len(parts); i += 2 {
		if strings.TrimSpace(parts[i]) != "" {
			spans = append(spans, parts[i])
		}
	}
	return spans
}

// checkOptions compares the table with the flags of fs and returns every
// difference: flags of the table that fs lacks, flags of fs the table
// lacks, and defaults that differ. A default cell is checked when it is
// literal: code spans, one per flag, against the flags' defaults; "off" for
// a boolean that is false by default; "none" or "—" for an empty default.
// Other cells describe a default chosen at run time and are not checked.
func checkOptions(rows []optionRow, fs *flag.FlagSet) []string {
	var problems []string
	seen := map[string]int{}
	for _, r := range rows {
		var defs []string
		for _, name := range r.flags {
			if first, ok := seen[name]; ok {
				problems = append(problems, fmt.Sprintf("line %d: --%s has a row already on line %d", r.line, name, first))
			}
			seen[name] = r.line
			fl := fs.Lookup(name)
			if fl == nil {
				problems = append(problems, fmt.Sprintf("line %d: --%s is no flag of the command", r.line, name))
				defs = append(defs, "?")
				continue
			}
			defs = append(defs, fl.DefValue)
		}
		word := strings.Fields(r.def)[0]
		var want []string
		switch {
		case literalDefaults.MatchString(r.def):
			want = codeSpans(r.def)
		case word == "off":
			want = slices.Repeat([]string{"false"}, len(r.flags))
		case word == "none" || word == "—":
			want = make([]string, len(r.flags))
		default:
			continue
		}
		if len(want) != len(defs) {
			problems = append(problems, fmt.Sprintf("line %d: %d defaults for %d flags %v", r.line, len(want), len(defs), r.flags))
			continue
		}
		for i, name := range r.flags {
			if defs[i] != "?" && want[i] != defs[i] {
				problems = append(problems, fmt.Sprintf("line %d: --%s: the README says default %q, the flag has %q", r.line, name, want[i], defs[i]))
			}
		}
	}
	fs.VisitAll(func(fl *flag.Flag) {
		if _, ok := seen[fl.Name]; !ok {
			problems = append(problems, fmt.Sprintf("--%s has no row in the README's table of options", fl.Name))
		}
	})
	return problems
}

// The README's tables of options list every flag of run and of score,
// and no other, with the default the flag has.
func TestReadmeOptions(t *testing.T) {
	text, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	o := kinmap.DefaultOptions()
	var out cli.Outputs
	for _, c := range []struct {
		heading string
		flags   *flag.FlagSet
	}{
		{"## Options", runFlags(&o, &out).FlagSet},
		{"## Scoring against a known truth", scoreFlags(new(scoreOptions)).FlagSet},
	} {
		rows, err := optionsTable(string(text), c.heading)
		if err != nil {
			t.Fatalf("README.md: %v", err)
		}
		for _, p := range checkOptions(rows, c.flags) {
			t.Errorf("README.md, %s: %s", c.heading, p)
		}
	}
}

// checkOptions finds each kind of difference between a table and the flags.
func TestCheckOptions(t *testing.T) {
	fs := flag.NewFlagSet("x", flag.ContinueOnError)
	fs.String("site-col", "site", "")
	fs.String("time-col", "time", "")
	fs.String("out", "", "")
	fs.Bool("quiet", false, "")
	fs.Float64("share", 0.6, "")
	fs.Int("epochs", 0, "")
	const head = "## Options\n\n| option | default | meaning |\n|---|---|---|\n"
	const good = "| `--site-col`, `--time-col` | `site`, `time` | columns |\n" +
		"| `--out DIR` | — | output |\n" +
		"| `--quiet` | off | quiet |\n" +
		"| `--share S\\|T` | `0.6` | share |\n" +
		"| `--epochs N` | chosen from the data | epochs |\n"
	tests := []struct {
		name  string
		table string
		want  []string // in the problems, one each; none for a good table
	}{
		{"good", good, nil},
		{"missing flag", strings.Replace(good, "| `--quiet` | off | quiet |\n", "", 1), []string{"--quiet has no row"}},
		{"unknown flag", good + "| `--colour C` | none | colour |\n", []string{"--colour is no flag"}},
		{"wrong literal", strings.Replace(good, "`0.6`", "`0.5`", 1), []string{`--share: the README says default "0.5", the flag has "0.6"`}},
		{"wrong one of two", strings.Replace(good, "`site`, `time`", "`site`, `ts`", 1), []string{`--time-col: the README says default "ts"`}},
		{"too few defaults", strings.Replace(good, "`site`, `time`", "`site`", 1), []string{"1 defaults for 2 flags"}},
		{"off for a value", strings.Replace(good, "| `--share S\\|T` | `0.6` |", "| `--share S\\|T` | off |", 1), []string{`--share: the README says default "false"`}},
		{"none for a set default", strings.Replace(good, "| `--share S\\|T` | `0.6` |", "| `--share S\\|T` | none |", 1), []string{`--share: the README says default "", the flag has "0.6"`}},
		{"twice", good + "| `--out DIR` | — | again |\n", []string{"--out has a row already"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			rows, err := optionsTable(head+tt.table+"\n## Next\n", "## Options")
			if err != nil {
				t.Fatal(err)
			}
			problems := checkOptions(rows, fs)
			if len(problems) != len(tt.want) {
				t.Fatalf("problems %q, want %d naming %q", problems, len(tt.want), tt.want)
			}
			for i, w := range tt.want {
				if !strings.Contains(problems[i], w) {
					t.Errorf("problem %q does not say %q", problems[i], w)
				}
			}
		})
	}
}
