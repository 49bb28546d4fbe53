package results

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFileAtomic writes a file through write: to a temporary file in the
// directory of path, which is synced and renamed to path only when write
// and every flush succeed. On any error the temporary file is removed and
// path is left as it was (absent, or with its old content). The file gets
// mode 0644.
func WriteFileAtomic(path string, write func(w io.Writer) error) error {
	f, err := createAtomic(path)
	if err != nil {
		return err
	}
	if err := write(f.w); err != nil {
		f.abort()
		return fmt.Errorf("results: writing %s: %w", path, err)
	}
	return f.commit()
}

// atomicFile is a temporary file that becomes path on commit.
type atomicFile struct {
	path string // final path
	f    *os.File
	w    *bufio.Writer // buffers writes to f; not a Closer, so wrappers cannot close f
	done bool          // committed or aborted
}

func createAtomic(path string) (*atomicFile, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("results: creating %s: %w", path, err)
	}
	return &atomicFile{path: path, f: f, w: bufio.NewWriterSize(f, 64<<10)}, nil
}

// commit flushes, syncs and closes the temporary file and renames it to the
// final path; on failure it removes the temporary file.
func (a *atomicFile) commit() error {
	if a.done {
		return errors.New("results: " + a.path + ": already closed")
	}
	a.done = true
	tmp := a.f.Name()
	err := a.w.Flush()
	if err == nil {
		err = a.f.Chmod(0o644)
	}
	if err == nil {
		err = a.f.Sync()
	}
	if cerr := a.f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp, a.path)
	}
	if err != nil {
		os.Remove(tmp)
		return fmt.Errorf("results: writing %s: %w", a.path, err)
	}
	syncDir(filepath.Dir(a.path))
	return nil
}

// abort closes and removes the temporary file. It is safe to call after
// commit or twice.
func (a *atomicFile) abort() {
	if a.done {
		return
	}
	a.done = true
	a.f.Close()
	os.Remove(a.f.Name())
}

// syncDir makes a rename durable where the system supports syncing a
// directory; failure to do so is not an error of the write.
func syncDir(dir string) {
	d, err := os.Open(dir)
	if err != nil {
		return
	}
	d.Sync()
	d.Close()
}
