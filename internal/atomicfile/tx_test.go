package atomicfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"maps"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/kinmap/kinmap/internal/faultwriter"
)

// snapshot returns every file below dir (but the lock file) with its
// contents.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || d.Name() == LockFile {
			return err
		}
		b, err := os.ReadFile(p)
		rel, _ := filepath.Rel(dir, p)
		out[rel] = string(b)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func text(s string) func(io.Writer) error {
	return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
}

// generation writes files a (in dir a) and b (in dir b, one folder down)
// holding generation g, and removes a file "odd" on even generations,
// writing it on odd ones, so that a half-done commit shows.
func generation(a, b string, g int, wrap func(string, io.Writer) io.Writer) error {
	tx, err := Begin(a, []string{b}, time.Minute)
	if err != nil {
		return err
	}
	defer tx.Abort()
	tx.Wrap = wrap
	body := strings.Repeat(fmt.Sprintf("generation %d\n", g), 2000)
	if err := tx.Create(filepath.Join(a, "a.txt"), text(body)); err != nil {
		return err
	}
	if err := tx.Create(filepath.Join(b, "sub", "b.txt"), text(body)); err != nil {
		return err
	}
	if g%2 == 1 {
		if err := tx.Create(filepath.Join(a, "odd.txt"), text(body)); err != nil {
			return err
		}
	} else if err := tx.Remove(filepath.Join(a, "odd.txt")); err != nil {
		return err
	}
	return tx.Commit()
}

// consistent reports the generation that dirs a and b hold, checking that
// every file holds the same one and nothing of a transaction is left.
func consistent(t *testing.T, a, b string) int {
	t.Helper()
	sa, sb := snapshot(t, a), snapshot(t, b)
	g := -1
	for name, s := range sa {
		if strings.HasPrefix(name, tempPrefix) {
			t.Errorf("%s left in %s", name, a)
		}
		if _, err := fmt.Sscanf(s, "generation %d", &g); err != nil {
			t.Errorf("%s: %q", name, s[:min(len(s), 30)])
		}
	}
	for name := range sb {
		if strings.HasPrefix(filepath.Base(name), tempPrefix) {
			t.Errorf("%s left in %s", name, b)
		}
	}
	want := strings.Repeat(fmt.Sprintf("generation %d\n", g), 2000)
	if sa["a.txt"] != want || sb[filepath.Join("sub", "b.txt")] != want {
		t.Errorf("a.txt and b.txt are not both generation %d", g)
	}
	if _, odd := sa["odd.txt"]; odd != (g%2 == 1) {
		t.Errorf("generation %d: odd.txt there: %t", g, odd)
	}
	return g
}

func TestCommitTogether(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	for g := 1; g <= 2; g++ {
		if err := generation(a, b, g, nil); err != nil {
			t.Fatal(err)
		}
		if got := consistent(t, a, b); got != g {
			t.Errorf("generation %d after committing %d", got, g)
		}
	}
}

// A write failing after N bytes, at each file in turn and at several N,
// leaves both folders byte for byte as they were, and its error names the
// file the user knows, not a temporary one.
func TestFailingWriterLeavesFolders(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	if err := generation(a, b, 1, nil); err != nil {
		t.Fatal(err)
	}
	before := [2]map[string]string{snapshot(t, a), snapshot(t, b)}
	for _, file := range []string{"a.txt", "b.txt"} {
		for _, n := range []int{0, 1, 4096, 20000} {
			wrap := func(path string, w io.Writer) io.Writer {
				if filepath.Base(path) == file {
					return &faultwriter.Writer{W: w, N: n}
				}
				return w
			}
			err := generation(a, b, 2, wrap)
			if !errors.Is(err, faultwriter.ErrFull) || !strings.Contains(err.Error(), file) || strings.Contains(err.Error(), tempPrefix) {
				t.Errorf("%s after %d bytes: error %v; want the injected one naming %s only", file, n, err, file)
			}
			after := [2]map[string]string{snapshot(t, a), snapshot(t, b)}
			if !maps.Equal(before[0], after[0]) || !maps.Equal(before[1], after[1]) {
				t.Errorf("%s after %d bytes: the folders changed", file, n)
			}
		}
	}
}

// A crash between the journal copies and the home journal is undone; one
// after the home journal is finished; either way by the next Begin.
func TestRecoverEitherSide(t *testing.T) {
	for _, committed := range []bool{false, true} {
		a, b := t.TempDir(), t.TempDir()
		if err := generation(a, b, 1, nil); err != nil {
			t.Fatal(err)
		}
		tx, err := Begin(a, []string{b}, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		body := strings.Repeat("generation 2\n", 2000)
		tx.Create(filepath.Join(a, "a.txt"), text(body))
		tx.Create(filepath.Join(b, "sub", "b.txt"), text(body))
		tx.Remove(filepath.Join(a, "odd.txt"))
		jb := []byte(fmt.Sprintf(`{"home":%q,"dirs":[%q,%q],"renames":[{"from":%q,"to":%q},{"from":%q,"to":%q}],"removes":[%q]}`,
			tx.home, tx.dirs[0], tx.dirs[1], tx.renames[0].From, tx.renames[0].To, tx.renames[1].From, tx.renames[1].To, tx.removes[0]))
		if err := writeJournal(tx.dirs[1], tx.id, jb); err != nil {
			t.Fatal(err)
		}
		if committed {
			if err := writeJournal(tx.home, tx.id, jb); err != nil {
				t.Fatal(err)
			}
		}
		tx.unlock() // the process dies here
		want := 1
		if committed {
			want = 2
		}
		// Recovery from the other folder alone must reach the same result.
		tx2, err := Begin(b, nil, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		if len(tx2.Notes()) == 0 {
			t.Error("recovery said nothing")
		}
		tx2.Abort()
		tx3, err := Begin(a, nil, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		tx3.Abort()
		if g := consistent(t, a, b); g != want {
			t.Errorf("committed %t: generation %d after recovery, want %d", committed, g, want)
		}
	}
}

// The child side of TestKilledCommit and TestConcurrentRuns: it commits
// generation after generation, or holds the lock for a while.
func TestMain(m *testing.M) {
	switch os.Getenv("ATOMICFILE_CHILD") {
	case "commit":
		a, b := os.Getenv("ATOMICFILE_A"), os.Getenv("ATOMICFILE_B")
		g, _ := strconv.Atoi(os.Getenv("ATOMICFILE_FROM"))
		fmt.Println("started")
		for ; ; g++ {
			if err := generation(a, b, g, nil); err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(3)
			}
		}
	case "hold":
		l, err := LockDir(os.Getenv("ATOMICFILE_A"), time.Minute)
		if err != nil {
			os.Exit(3)
		}
		fmt.Println("locked")
		time.Sleep(time.Second)
		l.Unlock()
		os.Exit(0)
	}
	os.Exit(m.Run())
}

func child(t *testing.T, mode string, env ...string) *exec.Cmd {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	c := exec.Command(exe, "-test.run=^$")
	c.Env = append(os.Environ(), append(env, "ATOMICFILE_CHILD="+mode)...)
	return c
}

// A process killed (SIGKILL) at random points of its commits leaves, once
// recovered, every file of one generation: never a mix of two, and no
// temporary file or journal. Seed 1 picks the delays.
func TestKilledCommit(t *testing.T) {
	if testing.Short() {
		t.Skip("kills child processes")
	}
	rng := rand.New(rand.NewPCG(1, 0))
	a, b := t.TempDir(), t.TempDir()
	if err := generation(a, b, 1, nil); err != nil {
		t.Fatal(err)
	}
	last, seen := 1, map[bool]bool{}
	for round := range 25 {
		c := child(t, "commit", "ATOMICFILE_A="+a, "ATOMICFILE_B="+b, "ATOMICFILE_FROM="+strconv.Itoa(last+1))
		var stderr bytes.Buffer
		c.Stderr = &stderr
		out, err := c.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		io.ReadFull(out, make([]byte, len("started\n")))
		time.Sleep(time.Duration(rng.IntN(30_000)) * time.Microsecond)
		c.Process.Signal(syscall.SIGKILL)
		err = c.Wait()
		if ws, ok := c.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() {
			t.Fatalf("round %d: the child was not killed: %v %s", round, err, stderr.String())
		}
		tx, err := Begin(a, []string{b}, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		seen[len(tx.Notes()) > 0] = true
		tx.Abort()
		g := consistent(t, a, b)
		if g < last {
			t.Fatalf("round %d: generation %d after %d", round, g, last)
		}
		last = g
	}
	t.Logf("reached generation %d; rounds with something to recover: %v", last, seen)
	if !seen[true] {
		t.Error("no kill fell inside a write; the check would not tell")
	}
}

// While another process holds a folder, a second waits up to its bound and
// then fails before touching anything; with a longer bound it goes ahead
// once the first is done.
func TestConcurrentRuns(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	if err := generation(a, b, 1, nil); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, a)
	for _, wait := range []time.Duration{100 * time.Millisecond, 10 * time.Second} {
		c := child(t, "hold", "ATOMICFILE_A="+a)
		out, err := c.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		if line, _ := io.ReadAll(io.LimitReader(out, 7)); string(line) != "locked\n" {
			t.Fatalf("child said %q", line)
		}
		tx, err := Begin(a, []string{b}, wait)
		var busy *ErrBusy
		switch {
		case wait < time.Second && !errors.As(err, &busy):
			t.Errorf("wait %v: %v, want the folder busy", wait, err)
		case wait < time.Second && !maps.Equal(snapshot(t, a), before):
			t.Errorf("a refused run changed the folder")
		case wait > time.Second && err != nil:
			t.Errorf("wait %v: %v", wait, err)
		}
		if err == nil {
			tx.Abort()
		}
		c.Wait()
	}
}
