package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/estbench/estbench/datasets/fetch"
)

func TestDataList(t *testing.T) {
	code, out, errOut := runCLI(t, "data", "list")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	unverified := 0
	for _, d := range fetch.Catalogue() {
		for _, want := range []string{d.Name + " — ", d.Licence, d.Publisher, d.Landing} {
			if !strings.Contains(out, want) {
				t.Errorf("list lacks %q", want)
			}
		}
		for _, f := range d.Files {
			if f.Unverified {
				unverified++
			} else if !strings.Contains(out, f.Name) || !strings.Contains(out, "sha256 "+f.SHA256) {
				t.Errorf("list lacks %s with its sum", f.Name)
			}
		}
	}
	if got := strings.Count(out, "NOT VERIFIED: no sha256 known"); got != unverified {
		t.Errorf("%d files marked not verified, the catalogue has %d", got, unverified)
	}
	code, out, _ = runCLI(t, "data", "list", "gpxpy-tracks")
	if code != exitOK || strings.Count(out, " — ") != 1 || !strings.Contains(out, "cerknicko-jezero.gpx") {
		t.Errorf("list of one: exit %d\n%s", code, out)
	}
	if code, _, e := runCLI(t, "data", "list", "gpxpy-track"); code != exitUsage || !strings.Contains(e, `did you mean "gpxpy-tracks"`) {
		t.Errorf("unknown name: exit %d, %q", code, e)
	}
}

func TestDataFetchUsage(t *testing.T) {
	if code, _, e := runCLI(t, "data", "fetch"); code != exitUsage || !strings.Contains(e, "want one dataset name") {
		t.Errorf("no name: exit %d, %q", code, e)
	}
	if code, _, e := runCLI(t, "data", "fetch", "ilc-sample"); code != exitUsage || !strings.Contains(e, `did you mean "ilc20-sample"`) {
		t.Errorf("unknown name: exit %d, %q", code, e)
	}
	if code, _, e := runCLI(t, "data", "fetch", "-h"); code != exitOK || !strings.Contains(e, "--accept-unverified") {
		t.Errorf("-h: exit %d, %q", code, e)
	}
	if code, _, e := runCLI(t, "data", "fecth"); code != exitUsage || !strings.Contains(e, `did you mean "fetch"`) {
		t.Errorf("misspelt subcommand: exit %d, %q", code, e)
	}
}

// An entry with unverified files is refused without the flag, before any
// request and before its folder is made.
func TestDataFetchRefusesUnverified(t *testing.T) {
	var hits atomic.Int32
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) { hits.Add(1) }))
	defer srv.Close()
	dir := filepath.Join(t.TempDir(), "broad")
	code, _, e := runCLI(t, "data", "fetch", "broad-trial21", "--dir", dir, "--mirror", srv.URL)
	if code != exitUsage || !strings.Contains(e, "Pass --accept-unverified") || !strings.Contains(e, "21_undisturbed_fast_combined.mat, trials.json") {
		t.Errorf("exit %d, %q", code, e)
	}
	if hits.Load() != 0 {
		t.Errorf("%d requests made", hits.Load())
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Error("the folder was made")
	}
}

func sha(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// With the flag the unverified file is fetched and its sum printed; a
// verified file with the wrong content fails with both sums (exit 1).
func TestDataFetchLocalServer(t *testing.T) {
	body := []byte("t,x\n0,1\n")
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) { w.Write(body) }))
	defer srv.Close()
	cat := []fetch.Dataset{
		{Name: "open-set", Licence: "CC0", Files: []fetch.File{{Name: "a.csv", URL: srv.URL + "/a.csv", Unverified: true}}},
		{Name: "pinned-set", Licence: "CC0", Files: []fetch.File{{Name: "a.csv", URL: srv.URL + "/a.csv", Size: int64(len(body)), SHA256: sha([]byte("t,x\n0,2\n"))}}},
	}
	base := fetch.Fetcher{Client: srv.Client(), Attempts: 1, Backoff: time.Millisecond}
	run := func(args ...string) (int, string, string) {
		var o, e bytes.Buffer
		code := dataFetchWith(args, &o, &e, cat, base)
		return code, o.String(), e.String()
	}
	dir := t.TempDir()
	code, out, e := run("open-set", "--dir", filepath.Join(dir, "open"), "--accept-unverified")
	if code != exitOK || !strings.Contains(out, "NOT VERIFIED, sha256 "+sha(body)) || !strings.Contains(e, "could not be verified") {
		t.Errorf("accepted: exit %d\n%s\n%s", code, out, e)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "open", "a.csv")); !bytes.Equal(b, body) {
		t.Errorf("fetched %q", b)
	}
	code, _, e = run("pinned-set", "--dir", filepath.Join(dir, "pinned"))
	if code != exitFailed || !strings.Contains(e, "a.csv: sha256 mismatch: expected "+sha([]byte("t,x\n0,2\n"))+", got "+sha(body)) {
		t.Errorf("mismatch: exit %d, %q", code, e)
	}
}

// A catalogue entry fetched through --mirror from a local server that serves
// the shared copies: the real catalogue sums verify, and a second run reuses
// the files.
func TestDataFetchCatalogueEntryThroughMirror(t *testing.T) {
	shared := filepath.Join("..", "..", "..", "..", "shared", "datasets", "nmea-gpsd-logs")
	if _, err := os.Stat(shared); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("shared datasets folder missing under CI: %v", err)
		}
		t.Skipf("shared datasets folder not present (expected beside the project at ../shared/datasets): %v", err)
	}
	d, ok := fetch.Lookup("gpsd-nmea-logs")
	if !ok {
		t.Fatal("gpsd-nmea-logs not in the catalogue")
	}
	local := map[string]string{} // mirror path -> shared file
	for _, f := range d.Files {
		u, _ := url.Parse(f.URL)
		name := f.Name
		if name == "COPYING" {
			name = "COPYING.gpsd.txt"
		}
		local["/"+u.Host+u.Path] = filepath.Join(shared, name)
	}
	var hits atomic.Int32
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		hits.Add(1)
		p, ok := local[r.URL.Path]
		if !ok {
			http.NotFound(w, r)
			return
		}
		http.ServeFile(w, r, p)
	}))
	defer srv.Close()
	dir := filepath.Join(t.TempDir(), "gpsd")
	code, out, e := runCLI(t, "data", "fetch", "gpsd-nmea-logs", "--dir", dir, "--mirror", srv.URL)
	if code != exitOK || strings.Count(out, "verified, downloaded") != len(d.Files) || !strings.Contains(out, "licence: BSD-2-Clause") {
		t.Fatalf("exit %d\n%s\n%s", code, out, e)
	}
	for _, f := range d.Files {
		b, err := os.ReadFile(filepath.Join(dir, f.Name))
		if err != nil || sha(b) != f.SHA256 {
			t.Errorf("%s: %v", f.Name, err)
		}
	}
	code, out, _ = runCLI(t, "data", "fetch", "gpsd-nmea-logs", "--dir", dir, "--mirror", srv.URL)
	if code != exitOK || strings.Count(out, "already present") != len(d.Files) || int(hits.Load()) != len(d.Files) {
		t.Errorf("second run: exit %d, %d requests in all\n%s", code, hits.Load(), out)
	}
}

func TestHumanBytes(t *testing.T) {
	for n, want := range map[int64]string{0: "0 B", 999: "999 B", 1000: "1.00 kB", 1019906: "1.02 MB", 99_949: "99.9 kB", 99_950: "100 kB", 999_499: "999 kB", 999_500: "1.00 MB", 64 << 30: "68.7 GB"} {
		if got := humanBytes(n); got != want {
			t.Errorf("humanBytes(%d) = %q, want %q", n, got, want)
		}
	}
}
