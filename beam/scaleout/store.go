package scaleout

import (
	"bytes"
	"context"
	"encoding/gob"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/local" // plain paths
)

// Files of a run's scratch folder, relative to it.
const (
	inputsFile = "inputs.gob"     // per-file outcomes of the read stage
	windowsDir = "windows"        // window shards
	assignDir  = "assign"         // assignments, one file per window shard
	epochName  = "epoch-%04d.gob" // per-unit sums of one epoch
	shardName  = "shard-%05d.gob"
)

// remote reports whether path names a file on a Beam file system other
// than the local one, such as gs://bucket/dump.parquet.
func remote(path string) bool { return strings.Contains(path, "://") }

// join joins a folder and a name with a slash, which every Beam file system
// accepts.
func join(dir string, names ...string) string {
	return strings.TrimSuffix(dir, "/") + "/" + strings.Join(names, "/")
}

// fileSystem opens the Beam file system of a path.
func fileSystem(ctx context.Context, path string) (filesystem.Interface, error) {
	fs, err := filesystem.New(ctx, path)
	if err != nil {
		return nil, pathErr(path, err)
	}
	return fs, nil
}

func pathErr(path string, err error) error { return fmt.Errorf("scaleout: %s: %w", path, err) }

// writeGob writes v gob-encoded to path through Beam's file systems. A
// worker that is retried writes the same file again, so the write is
// idempotent.
func writeGob(ctx context.Context, path string, v any) error {
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(v); err != nil {
		return pathErr(path, err)
	}
	fs, err := fileSystem(ctx, path)
	if err != nil {
		return err
	}
	defer fs.Close()
	if err := filesystem.Write(ctx, fs, path, buf.Bytes()); err != nil {
		return pathErr(path, err)
	}
	return nil
}

// readGob reads a file written by writeGob into v.
func readGob(ctx context.Context, path string, v any) error {
	fs, err := fileSystem(ctx, path)
	if err != nil {
		return err
	}
	defer fs.Close()
	b, err := filesystem.Read(ctx, fs, path)
	if err == nil {
		err = gob.NewDecoder(bytes.NewReader(b)).Decode(v)
	}
	if err != nil {
		return pathErr(path, err)
	}
	return nil
}

// list returns the files matching a glob pattern, sorted.
func list(ctx context.Context, pattern string) ([]string, error) {
	fs, err := fileSystem(ctx, pattern)
	if err != nil {
		return nil, err
	}
	defer fs.Close()
	names, err := fs.List(ctx, pattern)
	if err != nil {
		return nil, pathErr(pattern, err)
	}
	slices.Sort(names)
	return names, nil
}

// localCopy makes a file readable by the project's readers, which open
// local paths: a local path is returned as it is, a remote file is copied
// into a temporary folder under its own base name, so that messages still
// name it. done removes the copy.
func localCopy(ctx context.Context, path string) (local string, done func(), err error) {
	if !remote(path) {
		return path, func() {}, nil
	}
	fs, err := fileSystem(ctx, path)
	if err != nil {
		return "", nil, err
	}
	defer fs.Close()
	r, err := fs.OpenRead(ctx, path)
	if err != nil {
		return "", nil, pathErr(path, err)
	}
	defer r.Close()
	dir, err := os.MkdirTemp("", "kinmap-beam-")
	if err != nil {
		return "", nil, fmt.Errorf("scaleout: %w", err)
	}
	done = func() { os.RemoveAll(dir) }
	local = filepath.Join(dir, filepath.Base(path[strings.Index(path, "://")+3:]))
	f, err := os.Create(local)
	if err == nil {
		_, err = io.Copy(f, r)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}
	if err != nil {
		done()
		return "", nil, fmt.Errorf("scaleout: copying %s: %w", path, err)
	}
	return local, done, nil
}

// copyErr names the original of a local copy in the message of err.
type copyErr struct {
	err           error
	local, remote string
}

func (e *copyErr) Error() string { return strings.ReplaceAll(e.err.Error(), e.local, e.remote) }
func (e *copyErr) Unwrap() error { return e.err }

// asRemote makes an error about the local copy of a file name the file.
func asRemote(err error, local, path string) error {
	if err == nil || local == path {
		return err
	}
	return &copyErr{err, local, path}
}

// newRunDir names a fresh scratch folder for one run under work.
func newRunDir(work string) string {
	return join(work, fmt.Sprintf("kinmap-run-%d-%d", time.Now().UnixNano(), os.Getpid()))
}

// removeRunDir removes the scratch folder of a run: the whole folder on the
// local file system, each file elsewhere (object stores have no folders).
func removeRunDir(ctx context.Context, dir string) error {
	if !remote(dir) {
		return os.RemoveAll(dir)
	}
	fs, err := fileSystem(ctx, dir)
	if err != nil {
		return err
	}
	defer fs.Close()
	rm, ok := fs.(filesystem.Remover)
	if !ok {
		return fmt.Errorf("scaleout: the file system of %s cannot remove files", dir)
	}
	for _, pattern := range []string{join(dir, "*"), join(dir, "*", "*")} {
		names, err := fs.List(ctx, pattern)
		if err != nil {
			return err
		}
		for _, n := range names {
			if err := rm.Remove(ctx, n); err != nil {
				return err
			}
		}
	}
	return nil
}
