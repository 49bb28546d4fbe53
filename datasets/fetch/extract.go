package fetch

import (
	"archive/tar"
	"archive/zip"
	"bufio"
	"compress/gzip"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path"
	"strings"
)

// Limits bounds what one archive may unpack to.
type Limits struct {
	// MaxBytes caps the total size of the entries. If zero, 64 GiB is used.
	MaxBytes int64
	// MaxFiles caps the number of entries of any kind. If zero, 200000 is
	// used.
	MaxFiles int
}

func (l Limits) maxBytes() int64 {
	if l.MaxBytes > 0 {
		return l.MaxBytes
	}
	return 64 << 30
}

func (l Limits) maxFiles() int {
	if l.MaxFiles > 0 {
		return l.MaxFiles
	}
	return 200000
}

// ErrUnsafeArchive is matched by every [*ArchiveError].
var ErrUnsafeArchive = errors.New("fetch: archive refused")

// ArchiveError reports an archive, or one of its entries, that was refused.
type ArchiveError struct {
	Archive string // path of the archive
	Entry   string // the entry's name as stored; empty for the archive as a whole
	Reason  string
}

func (e *ArchiveError) Error() string {
	if e.Entry == "" {
		return fmt.Sprintf("fetch: archive %s: %s", e.Archive, e.Reason)
	}
	return fmt.Sprintf("fetch: archive %s: entry %q: %s", e.Archive, e.Entry, e.Reason)
}

// Is reports whether target is [ErrUnsafeArchive].
func (e *ArchiveError) Is(target error) bool { return target == ErrUnsafeArchive }

// ExtractStats counts what an archive unpacked to.
type ExtractStats struct {
	Entries int   // entries of any kind
	Bytes   int64 // bytes of regular files written
}

// Extract unpacks the archive src of the given kind into the existing folder
// dest, which should be empty. It never writes outside dest (see the package
// documentation for the rules). On error dest may hold part of the archive;
// the caller removes it.
func Extract(src string, kind Archive, dest string, lim Limits) (ExtractStats, error) {
	root, err := os.OpenRoot(dest)
	if err != nil {
		return ExtractStats{}, fmt.Errorf("fetch: extract %s: %w", src, err)
	}
	defer root.Close()
	x := &extractor{root: root, archive: src, lim: lim, links: map[string]bool{}, files: map[string]bool{}}
	switch kind {
	case Zip:
		err = x.zip()
	case TarGz, Tar:
		err = x.tar(kind == TarGz)
	default:
		err = &ArchiveError{Archive: src, Reason: "not an archive kind that can be extracted: " + kind.String()}
	}
	return x.stats, err
}

type extractor struct {
	root    *os.Root
	archive string
	lim     Limits
	stats   ExtractStats
	links   map[string]bool // cleaned names of the symbolic links made so far
	files   map[string]bool // cleaned names of the regular files made so far
}

func (x *extractor) refuse(entry, format string, args ...any) error {
	return &ArchiveError{Archive: x.archive, Entry: entry, Reason: fmt.Sprintf(format, args...)}
}

func (x *extractor) zip() error {
	zr, err := zip.OpenReader(x.archive)
	if err != nil && !errors.Is(err, zip.ErrInsecurePath) {
		return &ArchiveError{Archive: x.archive, Reason: "not a readable zip file: " + err.Error()}
	}
	defer zr.Close()
	// The central directory declares every entry: check the caps before
	// writing anything.
	if n := len(zr.File); n > x.lim.maxFiles() {
		return &ArchiveError{Archive: x.archive, Reason: fmt.Sprintf("%d entries, more than the limit of %d", n, x.lim.maxFiles())}
	}
	var declared uint64
	for _, f := range zr.File {
		if f.UncompressedSize64 > math.MaxInt64 || declared+f.UncompressedSize64 < declared {
			return x.refuse(f.Name, "declared size %d is out of range", f.UncompressedSize64)
		}
		declared += f.UncompressedSize64
		if declared > uint64(x.lim.maxBytes()) {
			return &ArchiveError{Archive: x.archive, Reason: fmt.Sprintf("entries declare more than the limit of %d bytes", x.lim.maxBytes())}
		}
	}
	for _, f := range zr.File {
		if err := x.zipEntry(f); err != nil {
			return err
		}
	}
	return nil
}

func (x *extractor) zipEntry(f *zip.File) error {
	mode := f.Mode()
	switch {
	case mode&fs.ModeSymlink != 0:
		if f.UncompressedSize64 > 4096 {
			return x.refuse(f.Name, "symbolic link target longer than 4096 bytes")
		}
		r, err := f.Open()
		if err != nil {
			return x.refuse(f.Name, "cannot read: %v", err)
		}
		target, err := io.ReadAll(io.LimitReader(r, 4097))
		r.Close()
		if err != nil {
			return x.refuse(f.Name, "cannot read: %v", err)
		}
		return x.symlink(f.Name, string(target))
	case mode.IsDir() || strings.HasSuffix(f.Name, "/"):
		return x.dir(f.Name)
	case mode.Type()&(fs.ModeDevice|fs.ModeCharDevice|fs.ModeNamedPipe|fs.ModeSocket|fs.ModeIrregular) != 0:
		return x.refuse(f.Name, "device, pipe and socket entries are refused")
	}
	r, err := f.Open()
	if err != nil {
		return x.refuse(f.Name, "cannot read: %v", err)
	}
	defer r.Close()
	return x.file(f.Name, r, int64(f.UncompressedSize64), mode)
}

func (x *extractor) tar(gz bool) error {
	fh, err := os.Open(x.archive)
	if err != nil {
		return fmt.Errorf("fetch: extract %s: %w", x.archive, err)
	}
	defer fh.Close()
	var r io.Reader = bufio.NewReaderSize(fh, 1<<16)
	if gz {
		zr, err := gzip.NewReader(r)
		if err != nil {
			return &ArchiveError{Archive: x.archive, Reason: "not a readable gzip file: " + err.Error()}
		}
		defer zr.Close()
		r = zr
	}
	tr := tar.NewReader(r)
	for {
		hdr, err := tr.Next()
		if err == io.EOF {
			return nil
		}
		if err != nil && !errors.Is(err, tar.ErrInsecurePath) {
			return &ArchiveError{Archive: x.archive, Reason: "corrupt tar stream: " + err.Error()}
		}
		if hdr.Size < 0 {
			return x.refuse(hdr.Name, "negative size")
		}
		switch hdr.Typeflag {
		case tar.TypeReg, tar.TypeGNUSparse:
			err = x.file(hdr.Name, tr, hdr.Size, hdr.FileInfo().Mode())
		case tar.TypeDir:
			err = x.dir(hdr.Name)
		case tar.TypeSymlink:
			err = x.symlink(hdr.Name, hdr.Linkname)
		case tar.TypeLink:
			err = x.hardlink(hdr.Name, hdr.Linkname)
		case tar.TypeChar, tar.TypeBlock, tar.TypeFifo:
			err = x.refuse(hdr.Name, "device and pipe entries are refused")
		case tar.TypeXGlobalHeader:
			err = x.count(hdr.Name)
		default:
			err = x.refuse(hdr.Name, "unsupported entry type %q", hdr.Typeflag)
		}
		if err != nil {
			return err
		}
	}
}

// count charges one entry against the cap.
func (x *extractor) count(entry string) error {
	x.stats.Entries++
	if x.stats.Entries > x.lim.maxFiles() {
		return x.refuse(entry, "more than the limit of %d entries", x.lim.maxFiles())
	}
	return nil
}

// local checks an entry's name and returns it cleaned ("" for the folder
// itself): relative, no "..", no backslash, and not running through a
// symbolic link made earlier.
func (x *extractor) local(entry, name, what string) (string, error) {
	switch {
	case name == "":
		return "", x.refuse(entry, "%s is empty", what)
	case strings.ContainsRune(name, 0):
		return "", x.refuse(entry, "%s contains a NUL byte", what)
	case strings.ContainsRune(name, '\\'):
		return "", x.refuse(entry, "%s contains a backslash (an ambiguous path separator)", what)
	case strings.HasPrefix(name, "/"):
		return "", x.refuse(entry, "%s is an absolute path", what)
	case len(name) >= 2 && name[1] == ':' && isLetter(name[0]):
		return "", x.refuse(entry, "%s starts with a drive letter", what)
	}
	var parts []string
	for _, p := range strings.Split(name, "/") {
		switch p {
		case "", ".":
		case "..":
			return "", x.refuse(entry, "%s contains \"..\" and could leave the target folder", what)
		default:
			parts = append(parts, p)
		}
	}
	for i := range parts {
		if pre := strings.Join(parts[:i+1], "/"); x.links[pre] {
			return "", x.refuse(entry, "%s runs through the symbolic link %q", what, pre)
		}
	}
	return strings.Join(parts, "/"), nil
}

func isLetter(c byte) bool { return 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' }

func (x *extractor) dir(name string) error {
	if err := x.count(name); err != nil {
		return err
	}
	clean, err := x.local(name, name, "path")
	if err != nil || clean == "" {
		return err
	}
	if err := x.root.MkdirAll(clean, 0o755); err != nil {
		return x.refuse(name, "%v", err)
	}
	return nil
}

func (x *extractor) parent(entry, clean string) error {
	if d := path.Dir(clean); d != "." {
		if err := x.root.MkdirAll(d, 0o755); err != nil {
			return x.refuse(entry, "%v", err)
		}
	}
	return nil
}

// file writes a regular file, copying at most declared bytes.
func (x *extractor) file(name string, r io.Reader, declared int64, mode fs.FileMode) error {
	if err := x.count(name); err != nil {
		return err
	}
	clean, err := x.local(name, name, "path")
	if err != nil {
		return err
	}
	if clean == "" {
		return x.refuse(name, "a file entry names the target folder itself")
	}
	if declared > x.lim.maxBytes()-x.stats.Bytes {
		return x.refuse(name, "declares %d bytes, which would pass the limit of %d bytes", declared, x.lim.maxBytes())
	}
	if err := x.parent(name, clean); err != nil {
		return err
	}
	perm := fs.FileMode(0o644)
	if mode&0o111 != 0 {
		perm = 0o755
	}
	// O_EXCL: a duplicate entry, or a name already taken by a link, is an
	// error rather than a write through it.
	out, err := x.root.OpenFile(clean, os.O_WRONLY|os.O_CREATE|os.O_EXCL, perm)
	if err != nil {
		return x.refuse(name, "%v", err)
	}
	n, err := io.Copy(out, io.LimitReader(r, declared+1))
	x.stats.Bytes += n
	if cerr := out.Close(); err == nil {
		err = cerr
	}
	switch {
	case n > declared:
		return x.refuse(name, "holds more than the %d bytes it declares", declared)
	case errors.Is(err, zip.ErrFormat):
		return x.refuse(name, "content does not match the %d bytes it declares, or is corrupt (%v)", declared, err)
	case errors.Is(err, zip.ErrChecksum):
		return x.refuse(name, "CRC-32 of the content does not match (%v)", err)
	case err != nil:
		return x.refuse(name, "%v", err)
	case n < declared:
		return x.refuse(name, "holds %d bytes but declares %d", n, declared)
	}
	x.files[clean] = true
	return nil
}

// symlink makes a relative symbolic link that stays inside the folder. The
// target may climb with leading ".." only as far as the link's own folder is
// deep, and may not climb after descending (a component that is itself a
// link would make the lexical check meaningless).
func (x *extractor) symlink(name, target string) error {
	if err := x.count(name); err != nil {
		return err
	}
	clean, err := x.local(name, name, "path")
	if err != nil {
		return err
	}
	if clean == "" {
		return x.refuse(name, "a link entry names the target folder itself")
	}
	switch {
	case target == "":
		return x.refuse(name, "symbolic link with an empty target")
	case strings.ContainsRune(target, 0) || strings.ContainsRune(target, '\\'):
		return x.refuse(name, "symbolic link target %q contains a NUL byte or backslash", target)
	case strings.HasPrefix(target, "/") || len(target) >= 2 && target[1] == ':' && isLetter(target[0]):
		return x.refuse(name, "symbolic link to the absolute path %q", target)
	}
	ups, descended := 0, false
	for _, p := range strings.Split(target, "/") {
		switch p {
		case "", ".":
		case "..":
			if descended {
				return x.refuse(name, "symbolic link target %q climbs after descending", target)
			}
			ups++
		default:
			descended = true
		}
	}
	depth := 0
	if d := path.Dir(clean); d != "." {
		depth = strings.Count(d, "/") + 1
	}
	if ups > depth {
		return x.refuse(name, "symbolic link to %q points outside the target folder", target)
	}
	if err := x.parent(name, clean); err != nil {
		return err
	}
	if err := x.root.Symlink(target, clean); err != nil {
		return x.refuse(name, "%v", err)
	}
	x.links[clean] = true
	return nil
}

// hardlink links to a regular file extracted earlier from the same archive.
func (x *extractor) hardlink(name, target string) error {
	if err := x.count(name); err != nil {
		return err
	}
	clean, err := x.local(name, name, "path")
	if err != nil {
		return err
	}
	old, err := x.local(name, target, "hard link target")
	if err != nil {
		return err
	}
	if clean == "" || !x.files[old] {
		return x.refuse(name, "hard link to %q, which is not a regular file extracted before it", target)
	}
	if err := x.parent(name, clean); err != nil {
		return err
	}
	if err := x.root.Link(old, clean); err != nil {
		return x.refuse(name, "%v", err)
	}
	x.files[clean] = true
	return nil
}
