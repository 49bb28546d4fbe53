package fetch

import (
	"archive/tar"
	"archive/zip"
	"bytes"
	"compress/flate"
	"compress/gzip"
	"errors"
	"hash/crc32"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
)

// entry describes one archive member for the builders below.
type entry struct {
	name string
	body string
	kind byte   // tar type flag; for zip: tar.TypeDir, TypeSymlink, TypeChar or TypeReg
	link string // target of a symbolic or hard link
	mode int64
}

func writeTar(t *testing.T, path string, gz bool, entries []entry) {
	t.Helper()
	var buf bytes.Buffer
	var tw *tar.Writer
	var zw *gzip.Writer
	if gz {
		zw = gzip.NewWriter(&buf)
		tw = tar.NewWriter(zw)
	} else {
		tw = tar.NewWriter(&buf)
	}
	for _, e := range entries {
		kind := e.kind
		if kind == 0 {
			kind = tar.TypeReg
		}
		mode := e.mode
		if mode == 0 {
			mode = 0o644
		}
		hdr := &tar.Header{Name: e.name, Typeflag: kind, Linkname: e.link, Mode: mode, Format: tar.FormatPAX}
		if kind == tar.TypeReg {
			hdr.Size = int64(len(e.body))
		}
		if err := tw.WriteHeader(hdr); err != nil {
			t.Fatal(err)
		}
		if kind == tar.TypeReg {
			if _, err := tw.Write([]byte(e.body)); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := tw.Close(); err != nil {
		t.Fatal(err)
	}
	if zw != nil {
		if err := zw.Close(); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

func writeZip(t *testing.T, path string, entries []entry) {
	t.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for _, e := range entries {
		fh := &zip.FileHeader{Name: e.name, Method: zip.Deflate}
		switch e.kind {
		case tar.TypeDir:
			fh.SetMode(fs.ModeDir | 0o755)
		case tar.TypeSymlink:
			fh.SetMode(fs.ModeSymlink | 0o777)
			e.body = e.link
		case tar.TypeChar:
			fh.SetMode(fs.ModeDevice | fs.ModeCharDevice | 0o644)
		default:
			fh.SetMode(fs.FileMode(max(e.mode, 0o644)))
		}
		w, err := zw.CreateHeader(fh)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := w.Write([]byte(e.body)); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// sandbox makes base/{target, outside/secret} and returns base and target.
func sandbox(t *testing.T) (base, target string) {
	t.Helper()
	base = t.TempDir()
	target = filepath.Join(base, "target")
	for _, d := range []string{target, filepath.Join(base, "outside")} {
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(filepath.Join(base, "outside", "secret"), []byte("keep"), 0o644); err != nil {
		t.Fatal(err)
	}
	return base, target
}

// untouched fails unless base still holds exactly target, outside/secret
// (unchanged) and the archives.
func untouched(t *testing.T, base string) {
	t.Helper()
	var got []string
	err := filepath.WalkDir(base, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(base, p)
		if rel == "target" {
			return filepath.SkipDir
		}
		if rel != "." && !strings.HasPrefix(rel, "archive.") {
			got = append(got, filepath.ToSlash(rel))
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"outside", "outside/secret"}; !slices.Equal(got, want) {
		t.Errorf("outside the target: %v, want only %v", got, want)
	}
	if b, err := os.ReadFile(filepath.Join(base, "outside", "secret")); err != nil || string(b) != "keep" {
		t.Errorf("outside/secret changed: %q, %v", b, err)
	}
}

func TestExtractGoodArchives(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("symbolic links need privileges on Windows")
	}
	entries := []entry{
		{name: "./", kind: tar.TypeDir},
		{name: "./room/", kind: tar.TypeDir},
		{name: "./room/mav0/imu0/data.csv", body: "#t,wx\n1,0.5\n"},
		{name: "room/tool.sh", body: "echo hi\n", mode: 0o755},
		{name: "room/latest.csv", kind: tar.TypeSymlink, link: "mav0/imu0/data.csv"},
		{name: "room/mav0/imu0/up.csv", kind: tar.TypeSymlink, link: "../../tool.sh"},
	}
	for _, kind := range []Archive{Zip, TarGz, Tar} {
		t.Run(kind.String(), func(t *testing.T) {
			base, target := sandbox(t)
			src := filepath.Join(base, "archive."+kind.String())
			if kind == Zip {
				writeZip(t, src, entries)
			} else {
				writeTar(t, src, kind == TarGz, entries)
			}
			st, err := Extract(src, kind, target, Limits{})
			if err != nil {
				t.Fatal(err)
			}
			if b, err := os.ReadFile(filepath.Join(target, "room", "latest.csv")); err != nil || string(b) != "#t,wx\n1,0.5\n" {
				t.Errorf("through the inside link: %q, %v", b, err)
			}
			if b, err := os.ReadFile(filepath.Join(target, "room/mav0/imu0/up.csv")); err != nil || string(b) != "echo hi\n" {
				t.Errorf("through the climbing inside link: %q, %v", b, err)
			}
			if fi, err := os.Stat(filepath.Join(target, "room", "tool.sh")); err != nil || fi.Mode().Perm() != 0o755 {
				t.Errorf("executable bit lost: %v, %v", fi, err)
			}
			if st.Entries != len(entries) || st.Bytes != int64(len("#t,wx\n1,0.5\n")+len("echo hi\n")) {
				t.Errorf("stats %+v", st)
			}
			untouched(t, base)
		})
	}
}

func TestExtractHardLinkInside(t *testing.T) {
	base, target := sandbox(t)
	src := filepath.Join(base, "archive.tar")
	writeTar(t, src, false, []entry{{name: "a/data", body: "x"}, {name: "b/copy", kind: tar.TypeLink, link: "a/data"}})
	if _, err := Extract(src, Tar, target, Limits{}); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(filepath.Join(target, "b", "copy")); err != nil || string(b) != "x" {
		t.Errorf("hard link: %q, %v", b, err)
	}
}

// Hostile archives are refused with the offending entry named, and nothing
// is written outside the target folder.
func TestExtractRefusesHostileArchives(t *testing.T) {
	base0 := t.TempDir() // only for the absolute paths below; never written
	abs := filepath.ToSlash(filepath.Join(base0, "abs-evil"))
	cases := []struct {
		name    string
		entries []entry
		entry   string // the entry the error names
		reason  string
		tarOnly bool
	}{
		{"dotdot", []entry{{name: "../evil", body: "x"}}, "../evil", `".."`, false},
		{"dotdot-inner", []entry{{name: "a/../../evil", body: "x"}}, "a/../../evil", `".."`, false},
		{"absolute", []entry{{name: abs, body: "x"}}, abs, "absolute", false},
		{"backslash", []entry{{name: `..\evil`, body: "x"}}, `..\evil`, "backslash", false},
		{"drive", []entry{{name: "C:evil", body: "x"}}, "C:evil", "drive letter", false},
		{"symlink-out", []entry{{name: "link", kind: tar.TypeSymlink, link: "../outside"}, {name: "link/evil", body: "x"}}, "link", "outside the target", false},
		{"symlink-deep-out", []entry{{name: "a/b/link", kind: tar.TypeSymlink, link: "../../../outside/secret"}}, "a/b/link", "outside the target", false},
		{"symlink-absolute", []entry{{name: "link", kind: tar.TypeSymlink, link: filepath.ToSlash(filepath.Join(base0, "x"))}}, "link", "absolute", false},
		{"symlink-climb-after-descend", []entry{{name: "d/", kind: tar.TypeDir}, {name: "up", kind: tar.TypeSymlink, link: "d/../../outside"}}, "up", "climbs after descending", false},
		// An inside link to ".", then a link whose path runs through it: its
		// lexical folder ("a/b") is deeper than its real one ("b"), so a
		// lexical check of "../../outside" alone would let it out.
		{"through-link", []entry{
			{name: "b/", kind: tar.TypeDir},
			{name: "a", kind: tar.TypeSymlink, link: "."},
			{name: "a/b/x", kind: tar.TypeSymlink, link: "../../outside"},
		}, "a/b/x", "runs through the symbolic link", false},
		{"file-through-link", []entry{{name: "sub/", kind: tar.TypeDir}, {name: "s", kind: tar.TypeSymlink, link: "sub"}, {name: "s/f", body: "x"}}, "s/f", "runs through", false},
		{"device", []entry{{name: "tty", kind: tar.TypeChar}}, "tty", "device", false},
		{"fifo", []entry{{name: "pipe", kind: tar.TypeFifo}}, "pipe", "pipe", true},
		{"hardlink-out", []entry{{name: "h", kind: tar.TypeLink, link: "../outside/secret"}}, "h", `".."`, true},
		{"hardlink-absolute", []entry{{name: "h", kind: tar.TypeLink, link: "/etc/passwd"}}, "h", "absolute", true},
		{"hardlink-to-link", []entry{{name: "s", kind: tar.TypeSymlink, link: "."}, {name: "h", kind: tar.TypeLink, link: "s"}}, "h", "symbolic link", true},
		{"hardlink-to-missing", []entry{{name: "h", kind: tar.TypeLink, link: "nothing"}}, "h", "not a regular file", true},
	}
	for _, c := range cases {
		for _, kind := range []Archive{Zip, TarGz} {
			if c.tarOnly && kind == Zip {
				continue
			}
			t.Run(c.name+"/"+kind.String(), func(t *testing.T) {
				base, target := sandbox(t)
				src := filepath.Join(base, "archive."+kind.String())
				if kind == Zip {
					writeZip(t, src, c.entries)
				} else {
					writeTar(t, src, true, c.entries)
				}
				_, err := Extract(src, kind, target, Limits{})
				var ae *ArchiveError
				if !errors.As(err, &ae) || !errors.Is(err, ErrUnsafeArchive) {
					t.Fatalf("err = %v, want an ArchiveError", err)
				}
				if ae.Entry != c.entry || !strings.Contains(ae.Reason, c.reason) {
					t.Errorf("refused entry %q for %q, want entry %q and a reason with %q", ae.Entry, ae.Reason, c.entry, c.reason)
				}
				untouched(t, base)
				if _, err := os.Lstat(abs); err == nil {
					t.Errorf("%s was written", abs)
				}
			})
		}
	}
}

func TestExtractLimits(t *testing.T) {
	many := make([]entry, 6)
	for i := range many {
		many[i] = entry{name: "f" + string(rune('a'+i)), body: "x"}
	}
	big := []entry{{name: "a", body: strings.Repeat("a", 400)}, {name: "b", body: strings.Repeat("b", 400)}, {name: "c", body: strings.Repeat("c", 400)}}
	for _, kind := range []Archive{Zip, TarGz} {
		t.Run("files/"+kind.String(), func(t *testing.T) {
			base, target := sandbox(t)
			src := filepath.Join(base, "archive."+kind.String())
			if kind == Zip {
				writeZip(t, src, many)
			} else {
				writeTar(t, src, true, many)
			}
			st, err := Extract(src, kind, target, Limits{MaxFiles: 5})
			if !errors.Is(err, ErrUnsafeArchive) || !strings.Contains(err.Error(), "limit of 5 entries") && !strings.Contains(err.Error(), "more than the limit of 5") {
				t.Fatalf("err = %v", err)
			}
			if kind == Zip && st.Entries != 0 {
				t.Errorf("zip: %d entries written before the count was checked", st.Entries)
			}
			untouched(t, base)
		})
		t.Run("bytes/"+kind.String(), func(t *testing.T) {
			base, target := sandbox(t)
			src := filepath.Join(base, "archive."+kind.String())
			if kind == Zip {
				writeZip(t, src, big)
			} else {
				writeTar(t, src, true, big)
			}
			st, err := Extract(src, kind, target, Limits{MaxBytes: 1000})
			if !errors.Is(err, ErrUnsafeArchive) || !strings.Contains(err.Error(), "limit of 1000 bytes") {
				t.Fatalf("err = %v", err)
			}
			if st.Bytes > 800 {
				t.Errorf("%d bytes written past the cap", st.Bytes)
			}
			untouched(t, base)
		})
	}
}

// A zip whose central directory declares a terabyte is refused before any
// byte is written; one that declares 10 bytes but inflates to a mebibyte is
// stopped at 10.
func TestExtractZipBombs(t *testing.T) {
	base, target := sandbox(t)
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	w, err := zw.CreateRaw(&zip.FileHeader{Name: "huge", Method: zip.Store, UncompressedSize64: 1 << 40, CompressedSize64: 5, CRC32: crc32.ChecksumIEEE([]byte("hello"))})
	if err != nil {
		t.Fatal(err)
	}
	w.Write([]byte("hello"))
	zw.Close()
	src := filepath.Join(base, "archive.huge.zip")
	os.WriteFile(src, buf.Bytes(), 0o644)
	st, err := Extract(src, Zip, target, Limits{})
	if !errors.Is(err, ErrUnsafeArchive) || !strings.Contains(err.Error(), "declare more than the limit") || st.Bytes != 0 {
		t.Fatalf("declared terabyte: err = %v, %d bytes written", err, st.Bytes)
	}

	var deflated bytes.Buffer
	fw, _ := flate.NewWriter(&deflated, flate.BestCompression)
	zeros := make([]byte, 1<<20)
	fw.Write(zeros)
	fw.Close()
	buf.Reset()
	zw = zip.NewWriter(&buf)
	w, err = zw.CreateRaw(&zip.FileHeader{Name: "small", Method: zip.Deflate, UncompressedSize64: 10,
		CompressedSize64: uint64(deflated.Len()), CRC32: crc32.ChecksumIEEE(zeros[:10])})
	if err != nil {
		t.Fatal(err)
	}
	w.Write(deflated.Bytes())
	zw.Close()
	src = filepath.Join(base, "archive.liar.zip")
	os.WriteFile(src, buf.Bytes(), 0o644)
	st, err = Extract(src, Zip, target, Limits{})
	var ae *ArchiveError
	if !errors.As(err, &ae) || ae.Entry != "small" || !strings.Contains(ae.Reason, "10 bytes it declares") {
		t.Fatalf("lying size: err = %v", err)
	}
	if fi, err := os.Stat(filepath.Join(target, "small")); err == nil && fi.Size() > 10 {
		t.Errorf("wrote %d bytes of an entry declaring 10", fi.Size())
	}
	untouched(t, base)
}

// A tar header declaring more than the cap is refused before its data are
// read (the stream here does not even hold them).
func TestExtractTarDeclaredHuge(t *testing.T) {
	base, target := sandbox(t)
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	tw := tar.NewWriter(zw)
	if err := tw.WriteHeader(&tar.Header{Name: "huge", Typeflag: tar.TypeReg, Size: 1 << 40, Mode: 0o644}); err != nil {
		t.Fatal(err)
	}
	tw.Flush() // reports the missing data; the header is out
	zw.Close()
	src := filepath.Join(base, "archive.tar.gz")
	os.WriteFile(src, buf.Bytes(), 0o644)
	st, err := Extract(src, TarGz, target, Limits{})
	var ae *ArchiveError
	if !errors.As(err, &ae) || ae.Entry != "huge" || !strings.Contains(ae.Reason, "declares 1099511627776 bytes") || st.Bytes != 0 {
		t.Fatalf("err = %v, %d bytes", err, st.Bytes)
	}
	untouched(t, base)
}

func TestExtractCorruptArchives(t *testing.T) {
	base, target := sandbox(t)
	src := filepath.Join(base, "archive.bin")
	os.WriteFile(src, []byte("this is not an archive"), 0o644)
	for _, kind := range []Archive{Zip, TarGz, NoArchive} {
		if _, err := Extract(src, kind, target, Limits{}); !errors.Is(err, ErrUnsafeArchive) {
			t.Errorf("%v: err = %v", kind, err)
		}
	}
	untouched(t, base)
}
