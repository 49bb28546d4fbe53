package fetch

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// server is a local test server: every URL of the datasets below points at
// it (the catalogue's own URLs are never contacted). handle decides each
// answer from the request count (1-based) for the path.
type server struct {
	*httptest.Server
	mu     sync.Mutex
	count  map[string]int
	ranges []string // Range header of every request, in order ("" when none)
	agents []string
	encs   []string
	paths  []string
	handle func(w http.ResponseWriter, r *http.Request, n int)
}

func newServer(t *testing.T, handle func(w http.ResponseWriter, r *http.Request, n int)) *server {
	s := &server{count: map[string]int{}, handle: handle}
	s.Server = httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		s.mu.Lock()
		s.count[r.URL.Path]++
		n := s.count[r.URL.Path]
		s.ranges = append(s.ranges, r.Header.Get("Range"))
		s.agents = append(s.agents, r.Header.Get("User-Agent"))
		s.encs = append(s.encs, r.Header.Get("Accept-Encoding"))
		s.paths = append(s.paths, r.URL.Path)
		s.mu.Unlock()
		s.handle(w, r, n)
	}))
	t.Cleanup(s.Close)
	return s
}

func (s *server) requests() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return len(s.ranges)
}

func (s *server) countOf(path string) int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.count[path]
}

func (s *server) rangesSeen() []string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return append([]string(nil), s.ranges...)
}

// serveRange answers "bytes=N-" ranges (RFC 9110, §14.1.2 and §14.4: 206
// with Content-Range "bytes N-last/len", or 416 with "bytes */len" when N is
// at or past the end) and anything else with the whole body.
func serveRange(w http.ResponseWriter, r *http.Request, data []byte) {
	total := len(data)
	if rg := r.Header.Get("Range"); rg != "" {
		start, err := strconv.Atoi(strings.TrimSuffix(strings.TrimPrefix(rg, "bytes="), "-"))
		if err != nil {
			http.Error(w, "bad range", http.StatusBadRequest)
			return
		}
		if start >= total {
			w.Header().Set("Content-Range", fmt.Sprintf("bytes */%d", total))
			w.WriteHeader(http.StatusRequestedRangeNotSatisfiable)
			return
		}
		w.Header().Set("Content-Range", fmt.Sprintf("bytes %d-%d/%d", start, total-1, total))
		w.Header().Set("Content-Length", strconv.Itoa(total-start))
		w.WriteHeader(http.StatusPartialContent)
		w.Write(data[start:])
		return
	}
	w.Header().Set("Content-Length", strconv.Itoa(total))
	w.Write(data)
}

// cut sends the headers for the whole body, then the first n bytes, then
// drops the connection.
func cut(w http.ResponseWriter, data []byte, n int) {
	w.Header().Set("Content-Length", strconv.Itoa(len(data)))
	w.Write(data[:n])
	w.(http.Flusher).Flush()
	panic(http.ErrAbortHandler)
}

func payload(n int) []byte {
	r := rand.New(rand.NewPCG(3, 5))
	b := make([]byte, n)
	for i := range b {
		b[i] = byte(r.Uint32())
	}
	return b
}

func sum(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

func dataset(s *server, files ...File) Dataset {
	for i := range files {
		files[i].URL = s.URL + "/" + files[i].Name
	}
	return Dataset{Name: "test-set", Files: files}
}

func fast(s *server) *Fetcher {
	return &Fetcher{Client: s.Client(), Attempts: 1, Backoff: time.Millisecond}
}

// A good file downloads, verifies and is reused on the next fetch. The sum
// of "abc" is the SHA-256 test vector of FIPS 180-2 (NIST 2002), Appendix
// B.1.
func TestFetchGoodFile(t *testing.T) {
	big := payload(300_000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if r.URL.Path == "/abc.txt" {
			serveRange(w, r, []byte("abc"))
			return
		}
		serveRange(w, r, big)
	})
	d := dataset(s,
		File{Name: "abc.txt", Size: 3, SHA256: "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"},
		File{Name: "big.bin", Size: int64(len(big)), SHA256: sum(big)})
	dir := filepath.Join(t.TempDir(), "set")
	f := fast(s)
	var last [2]int64
	f.Progress = func(name string, done, total int64) {
		if name == "big.bin" {
			last = [2]int64{done, total}
		}
	}
	res, err := f.Fetch(context.Background(), d, dir)
	if err != nil {
		t.Fatal(err)
	}
	for i, fr := range res.Files {
		if !fr.Verified || fr.Reused || fr.Tries != 1 || fr.Size != d.Files[i].Size || fr.SHA256 != d.Files[i].SHA256 {
			t.Errorf("%+v", fr)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "big.bin")); !bytes.Equal(b, big) {
		t.Error("big.bin differs from what was served")
	}
	if last != [2]int64{int64(len(big)), int64(len(big))} {
		t.Errorf("last progress %v", last)
	}
	if _, err := os.Stat(filepath.Join(dir, "big.bin.part")); !os.IsNotExist(err) {
		t.Errorf("part file left: %v", err)
	}
	s.mu.Lock()
	agent, enc := s.agents[0], s.encs[0]
	s.mu.Unlock()
	if agent != DefaultUserAgent || enc != "identity" {
		t.Errorf("User-Agent %q, Accept-Encoding %q", agent, enc)
	}
	res, err = f.Fetch(context.Background(), d, dir)
	if err != nil || !res.Files[0].Reused || !res.Files[1].Reused || s.requests() != 2 {
		t.Errorf("second fetch: %v, %+v, %d requests in all", err, res.Files, s.requests())
	}
}

// A corrupted file fails with a message naming the file and both sums, and
// is moved aside; nothing is left under the file's own name.
func TestFetchCorruptFile(t *testing.T) {
	good := payload(50_000)
	bad := append([]byte(nil), good...)
	bad[1234] ^= 0x40
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, bad) })
	d := dataset(s, File{Name: "imu.bin", Size: int64(len(good)), SHA256: sum(good)})
	dir := t.TempDir()
	_, err := fast(s).Fetch(context.Background(), d, dir)
	var ce *ChecksumError
	if !errors.As(err, &ce) {
		t.Fatalf("err = %v, want a ChecksumError", err)
	}
	msg := err.Error()
	for _, want := range []string{"imu.bin", "expected " + sum(good), "got " + sum(bad), filepath.Join(dir, "imu.bin.bad")} {
		if !strings.Contains(msg, want) {
			t.Errorf("message %q lacks %q", msg, want)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "imu.bin")); !os.IsNotExist(err) {
		t.Error("the corrupt file is there under its own name")
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "imu.bin.bad")); !bytes.Equal(b, bad) {
		t.Error("the quarantined file is not what arrived")
	}
	// The next fetch from a repaired server downloads afresh.
	s.handle = func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, good) }
	if _, err := fast(s).Fetch(context.Background(), d, dir); err != nil {
		t.Fatal(err)
	}
}

// A copy already present with the wrong sum is quarantined and replaced.
func TestFetchReplacesWrongLocalCopy(t *testing.T) {
	good := payload(1000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, good) })
	d := dataset(s, File{Name: "a.bin", Size: int64(len(good)), SHA256: sum(good)})
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "a.bin"), []byte("edited by hand"), 0o644)
	res, err := fast(s).Fetch(context.Background(), d, dir)
	if err != nil || res.Files[0].Quarantined != filepath.Join(dir, "a.bin.bad") || !res.Files[0].Verified {
		t.Fatalf("%v, %+v", err, res.Files)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "a.bin.bad")); string(b) != "edited by hand" {
		t.Errorf("quarantined %q", b)
	}
}

// A connection cut mid-body leaves the part file; the next fetch asks for the
// rest with a Range request and the result verifies.
func TestFetchResumesAfterCut(t *testing.T) {
	data := payload(200_000)
	const at = 70_000
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if n == 1 {
			cut(w, data, at)
		}
		serveRange(w, r, data)
	})
	d := dataset(s, File{Name: "trace.bin", Size: int64(len(data)), SHA256: sum(data)})
	dir := t.TempDir()
	_, err := fast(s).Fetch(context.Background(), d, dir)
	if err == nil || !strings.Contains(err.Error(), "kept for the next attempt") {
		t.Fatalf("first fetch: err = %v", err)
	}
	fi, err := os.Stat(filepath.Join(dir, "trace.bin.part"))
	if err != nil || fi.Size() != at {
		t.Fatalf("part file after the cut: %v, %v; want %d bytes", fi, err, at)
	}
	res, err := fast(s).Fetch(context.Background(), d, dir)
	if err != nil {
		t.Fatal(err)
	}
	fr := res.Files[0]
	if !fr.Verified || fr.ResumedFrom != at || fr.Restarted {
		t.Errorf("%+v", fr)
	}
	if got := s.rangesSeen(); len(got) != 2 || got[0] != "" || got[1] != "bytes=70000-" {
		t.Errorf("Range headers %q", got)
	}
}

// With retries allowed, one fetch gets past the cut by itself.
func TestFetchRetriesAndResumes(t *testing.T) {
	data := payload(100_000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if n == 1 {
			cut(w, data, 40_000)
		}
		serveRange(w, r, data)
	})
	f := fast(s)
	f.Attempts = 3
	res, err := f.Fetch(context.Background(), dataset(s, File{Name: "x.bin", Size: int64(len(data)), SHA256: sum(data)}), t.TempDir())
	if err != nil || res.Files[0].Tries != 2 || res.Files[0].ResumedFrom != 40_000 {
		t.Fatalf("%v, %+v", err, res.Files)
	}
}

// A server that ignores Range (200 with the whole body) makes the download
// start again from byte zero: the stale part file is discarded, not
// appended to.
func TestFetchServerIgnoresRange(t *testing.T) {
	data := payload(80_000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		w.Header().Set("Content-Length", strconv.Itoa(len(data)))
		w.Write(data)
	})
	d := dataset(s, File{Name: "x.bin", Size: int64(len(data)), SHA256: sum(data)})
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "x.bin.part"), []byte("stale bytes of an older download"), 0o644)
	res, err := fast(s).Fetch(context.Background(), d, dir)
	if err != nil || !res.Files[0].Restarted || !res.Files[0].Verified || res.Files[0].ResumedFrom != 0 {
		t.Fatalf("%v, %+v", err, res.Files)
	}
	if got := s.rangesSeen(); len(got) != 1 || got[0] != "bytes=32-" {
		t.Errorf("Range headers %q", got)
	}
}

// A server answering a range other than the one asked for is treated the
// same way.
func TestFetchWrongRangeRestarts(t *testing.T) {
	data := payload(5000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if r.Header.Get("Range") != "" {
			w.Header().Set("Content-Range", fmt.Sprintf("bytes 0-%d/%d", len(data)-1, len(data)))
			w.WriteHeader(http.StatusPartialContent)
			w.Write(data)
			return
		}
		serveRange(w, r, data)
	})
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "x.bin.part"), data[:100], 0o644)
	res, err := fast(s).Fetch(context.Background(), dataset(s, File{Name: "x.bin", Size: int64(len(data)), SHA256: sum(data)}), dir)
	if err != nil || !res.Files[0].Restarted || !res.Files[0].Verified {
		t.Fatalf("%v, %+v", err, res.Files)
	}
	if got := s.rangesSeen(); len(got) != 2 || got[0] != "bytes=100-" || got[1] != "" {
		t.Errorf("Range headers %q", got)
	}
}

// A part file longer than the remote file restarts cleanly: at once when the
// catalogue gives the size, after the server's 416 when it does not.
func TestFetchPartLongerThanRemote(t *testing.T) {
	data := payload(3000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, data) })
	long := append(payload(3100), 'x')

	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "k.bin.part"), long, 0o644)
	res, err := fast(s).Fetch(context.Background(), dataset(s, File{Name: "k.bin", Size: int64(len(data)), SHA256: sum(data)}), dir)
	if err != nil || !res.Files[0].Restarted || !res.Files[0].Verified {
		t.Fatalf("known size: %v, %+v", err, res.Files)
	}
	if got := s.rangesSeen(); len(got) != 1 || got[0] != "" {
		t.Errorf("known size: Range headers %q, want one request without a range", got)
	}

	os.WriteFile(filepath.Join(dir, "u.bin.part"), long, 0o644)
	f := fast(s)
	f.AcceptUnverified = true
	res, err = f.Fetch(context.Background(), dataset(s, File{Name: "u.bin", Unverified: true}), dir)
	if err != nil || !res.Files[0].Restarted || res.Files[0].Verified || res.Files[0].SHA256 != sum(data) {
		t.Fatalf("unknown size: %v, %+v", err, res.Files)
	}
	if got := s.rangesSeen()[1:]; len(got) != 2 || got[0] != "bytes=3101-" || got[1] != "" {
		t.Errorf("unknown size: Range headers %q, want the range (answered 416) then none", got)
	}
}

// A complete part of unknown size is recognised from the 416's total.
func TestFetchCompletePartUnknownSize(t *testing.T) {
	data := payload(3000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, data) })
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "u.bin.part"), data, 0o644)
	f := fast(s)
	f.AcceptUnverified = true
	res, err := f.Fetch(context.Background(), dataset(s, File{Name: "u.bin", Unverified: true}), dir)
	if err != nil || res.Files[0].Restarted || res.Files[0].SHA256 != sum(data) || s.requests() != 1 {
		t.Fatalf("%v, %+v, %d requests", err, res.Files, s.requests())
	}
}

// Unverified entries are refused without the flag, before any request, and
// fetched with it.
func TestFetchUnverified(t *testing.T) {
	data := []byte("rows without a published sum\n")
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, data) })
	d := dataset(s, File{Name: "ok.txt", Size: 3, SHA256: "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"},
		File{Name: "open.txt", Unverified: true})
	dir := filepath.Join(t.TempDir(), "set")
	_, err := fast(s).Fetch(context.Background(), d, dir)
	var ue *UnverifiedError
	if !errors.Is(err, ErrUnverified) || !errors.As(err, &ue) || len(ue.Files) != 1 || ue.Files[0] != "open.txt" {
		t.Fatalf("err = %v", err)
	}
	if s.requests() != 0 {
		t.Errorf("%d requests before refusing", s.requests())
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Error("the folder was created for a refused dataset")
	}
	f := fast(s)
	f.AcceptUnverified = true
	d.Files = d.Files[1:]
	res, err := f.Fetch(context.Background(), d, dir)
	if err != nil || res.Files[0].Verified || res.Files[0].SHA256 != sum(data) {
		t.Fatalf("%v, %+v", err, res.Files)
	}
}

// 404 is final; 503 is retried the configured number of times and no more.
func TestFetchHTTPErrors(t *testing.T) {
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if r.URL.Path == "/gone.bin" {
			http.NotFound(w, r)
			return
		}
		http.Error(w, "busy", http.StatusServiceUnavailable)
	})
	f := fast(s)
	f.Attempts = 3
	_, err := f.Fetch(context.Background(), dataset(s, File{Name: "gone.bin", Size: 1, SHA256: sum([]byte("x"))}), t.TempDir())
	var he *HTTPError
	if !errors.As(err, &he) || he.Status != 404 || s.countOf("/gone.bin") != 1 {
		t.Errorf("404: %v after %d requests", err, s.countOf("/gone.bin"))
	}
	_, err = f.Fetch(context.Background(), dataset(s, File{Name: "busy.bin", Size: 1, SHA256: sum([]byte("x"))}), t.TempDir())
	if !errors.As(err, &he) || he.Status != 503 || s.countOf("/busy.bin") != 3 || !strings.Contains(err.Error(), "after 3 tries") {
		t.Errorf("503: %v after %d requests", err, s.countOf("/busy.bin"))
	}
}

// A server whose file is not the catalogue's size is refused from its
// headers, before the body is written.
func TestFetchSizeMismatch(t *testing.T) {
	data := payload(2000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, data) })
	dir := t.TempDir()
	_, err := fast(s).Fetch(context.Background(), dataset(s, File{Name: "s.bin", Size: 1999, SHA256: sum(data[:1999])}), dir)
	if err == nil || !strings.Contains(err.Error(), "the server's file is 2000 bytes, the catalogue says 1999") {
		t.Fatalf("err = %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "s.bin.part")); !os.IsNotExist(err) {
		t.Error("a part file was written")
	}
}

// A transfer that stalls is ended after StallTimeout and resumed.
func TestFetchStallResumes(t *testing.T) {
	data := payload(60_000)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if n == 1 {
			w.Header().Set("Content-Length", strconv.Itoa(len(data)))
			w.Write(data[:20_000])
			w.(http.Flusher).Flush()
			select {
			case <-r.Context().Done():
			case <-time.After(10 * time.Second):
			}
			return
		}
		serveRange(w, r, data)
	})
	f := fast(s)
	f.Attempts, f.StallTimeout = 2, 100*time.Millisecond
	res, err := f.Fetch(context.Background(), dataset(s, File{Name: "x.bin", Size: int64(len(data)), SHA256: sum(data)}), t.TempDir())
	if err != nil || res.Files[0].ResumedFrom != 20_000 || res.Files[0].Tries != 2 {
		t.Fatalf("%v, %+v", err, res.Files)
	}
}

// The caller's cancellation is final (no retry) and keeps the part file.
func TestFetchCancel(t *testing.T) {
	data := payload(60_000)
	ctx, cancel := context.WithCancel(context.Background())
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		w.Header().Set("Content-Length", strconv.Itoa(len(data)))
		w.Write(data[:10_000])
		w.(http.Flusher).Flush()
		select {
		case <-r.Context().Done():
		case <-time.After(10 * time.Second):
		}
	})
	f := fast(s)
	f.Attempts = 4
	f.Progress = func(string, int64, int64) { cancel() } // once bytes are on disk
	dir := t.TempDir()
	_, err := f.Fetch(ctx, dataset(s, File{Name: "x.bin", Size: int64(len(data)), SHA256: sum(data)}), dir)
	if !errors.Is(err, context.Canceled) || s.requests() != 1 {
		t.Fatalf("err = %v after %d requests", err, s.requests())
	}
	if _, err := os.Stat(filepath.Join(dir, "x.bin.part")); err != nil {
		t.Errorf("part file: %v", err)
	}
}

// A mirror serves host/path of the publisher's URL; the publisher's server
// is not contacted.
func TestFetchMirror(t *testing.T) {
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) { serveRange(w, r, []byte("abc")) })
	f := fast(s)
	f.Mirror = s.URL + "/mirror/"
	d := Dataset{Name: "m", Files: []File{{Name: "abc.txt", URL: "https://data.example.org/sets/v1/abc.txt", Size: 3,
		SHA256: "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"}}}
	if _, err := f.Fetch(context.Background(), d, t.TempDir()); err != nil {
		t.Fatal(err)
	}
	s.mu.Lock()
	asked := s.paths[0]
	s.mu.Unlock()
	if asked != "/mirror/data.example.org/sets/v1/abc.txt" {
		t.Errorf("asked the mirror for %q", asked)
	}
}

// An archive is unpacked into dir/<stem> once; a hostile one leaves neither
// that folder nor a temporary one.
func TestFetchArchive(t *testing.T) {
	base := t.TempDir()
	good := filepath.Join(base, "good.tar.gz")
	writeTar(t, good, true, []entry{{name: "seq/mav0/imu0/data.csv", body: "1,2\n"}})
	evil := filepath.Join(base, "evil.tar.gz")
	writeTar(t, evil, true, []entry{{name: "ok.txt", body: "x"}, {name: "../evil", body: "x"}})
	goodB, _ := os.ReadFile(good)
	evilB, _ := os.ReadFile(evil)
	s := newServer(t, func(w http.ResponseWriter, r *http.Request, n int) {
		if r.URL.Path == "/seq.tar.gz" {
			serveRange(w, r, goodB)
			return
		}
		serveRange(w, r, evilB)
	})
	dir := filepath.Join(base, "set")
	d := dataset(s, File{Name: "seq.tar.gz", Size: int64(len(goodB)), SHA256: sum(goodB), Archive: TarGz})
	res, err := fast(s).Fetch(context.Background(), d, dir)
	if err != nil || res.Files[0].Extracted != filepath.Join(dir, "seq") || res.Files[0].Unpacked.Entries != 1 {
		t.Fatalf("%v, %+v", err, res.Files)
	}
	if b, err := os.ReadFile(filepath.Join(dir, "seq", "seq", "mav0", "imu0", "data.csv")); err != nil || string(b) != "1,2\n" {
		t.Errorf("unpacked %q, %v", b, err)
	}
	res, err = fast(s).Fetch(context.Background(), d, dir)
	if err != nil || !res.Files[0].Reused || !res.Files[0].ExtractReused {
		t.Errorf("second fetch: %v, %+v", err, res.Files)
	}

	d = dataset(s, File{Name: "bad.tar.gz", Size: int64(len(evilB)), SHA256: sum(evilB), Archive: TarGz})
	_, err = fast(s).Fetch(context.Background(), d, dir)
	if !errors.Is(err, ErrUnsafeArchive) || !strings.Contains(err.Error(), `"../evil"`) {
		t.Fatalf("err = %v", err)
	}
	ents, _ := os.ReadDir(dir)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if strings.Join(names, " ") != "bad.tar.gz seq seq.tar.gz" {
		t.Errorf("folder holds %v", names)
	}
	if _, err := os.Stat(filepath.Join(base, "evil")); !os.IsNotExist(err) {
		t.Error("../evil was written")
	}
}

func TestCheckRedirect(t *testing.T) {
	req := func(s string) *http.Request {
		u, _ := url.Parse(s)
		return &http.Request{URL: u}
	}
	if err := checkRedirect(req("http://b.example/x"), []*http.Request{req("https://a.example/x")}); err == nil {
		t.Error("https to http redirect allowed")
	}
	if err := checkRedirect(req("https://b.example/x"), []*http.Request{req("http://a.example/x")}); err != nil {
		t.Errorf("http to https refused: %v", err)
	}
	via := make([]*http.Request, 10)
	for i := range via {
		via[i] = req("https://a.example/x")
	}
	if err := checkRedirect(req("https://a.example/y"), via); err == nil {
		t.Error("an 11th redirect allowed")
	}
}

// Content-Range forms of RFC 9110 (Fielding, Nottingham, Reschke 2022), §14.4.
func TestParseContentRange(t *testing.T) {
	for _, c := range []struct {
		in           string
		start, total int64
		ok           bool
	}{
		{"bytes 42-1233/1234", 42, 1234, true},
		{"bytes 42-1233/*", 42, -1, true},
		{"bytes */1234", -1, 1234, true},
		{"bytes 42/1234", 0, 0, false},
		{"items 0-1/2", 0, 0, false},
		{"", 0, 0, false},
		{"bytes x-1/2", 0, 0, false},
	} {
		s, tot, ok := parseContentRange(c.in)
		if s != c.start || tot != c.total || ok != c.ok {
			t.Errorf("%q: %d %d %v, want %d %d %v", c.in, s, tot, ok, c.start, c.total, c.ok)
		}
	}
}

// Exponential backoff, doubling and capped: common practice, no source.
func TestBackoff(t *testing.T) {
	f := &Fetcher{Backoff: 10 * time.Second}
	want := []time.Duration{10 * time.Second, 20 * time.Second, 30 * time.Second, 30 * time.Second}
	for i, w := range want {
		if got := f.backoff(i + 1); got != w {
			t.Errorf("backoff(%d) = %v, want %v", i+1, got, w)
		}
	}
	if got := (&Fetcher{}).backoff(1); got != time.Second {
		t.Errorf("default first backoff %v", got)
	}
}

func TestDownloadRefusesMalformedFiles(t *testing.T) {
	f := &Fetcher{}
	for _, file := range []File{
		{Name: "../x", URL: "https://a.example/x", Unverified: true},
		{Name: "x.part", URL: "https://a.example/x", Unverified: true},
		{Name: "x", URL: "https://a.example/x"},                // no sum and not marked
		{Name: "x", URL: "https://a.example/x", SHA256: "abc"}, // short sum
		{Name: "x", URL: "https://a.example/x", SHA256: "abc", Unverified: true},
	} {
		if _, err := f.Download(context.Background(), file, t.TempDir()); err == nil {
			t.Errorf("%+v accepted", file)
		}
	}
	f.AcceptUnverified = true
	if _, err := f.Download(context.Background(), File{Name: "x", URL: "ftp://a.example/x", Unverified: true}, t.TempDir()); err == nil {
		t.Error("ftp URL accepted")
	}
}
