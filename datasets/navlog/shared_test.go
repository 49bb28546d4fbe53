package navlog

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// sharedDir is the folder of public dataset samples, beside the repo.
const sharedDir = "../../../shared/datasets"

// sharedFile returns a file of the public dataset samples. It skips the
// test when the samples are absent, and fails it under CI=true.
func sharedFile(t testing.TB, dir, name string) []byte {
	t.Helper()
	p := filepath.Join(sharedDir, dir, name)
	b, err := os.ReadFile(p)
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("dataset sample %s is missing under CI: %v", p, err)
		}
		t.Skipf("dataset sample %s not found (shared datasets absent): %v", p, err)
	}
	return b
}

// fuzzSeeds returns the sample files for seeding a fuzz target, nil if
// the samples are absent; large files are cut into 4 KiB pieces at line
// boundaries so that each seed stays small.
func fuzzSeeds(dir string, names ...string) [][]byte {
	var out [][]byte
	for _, n := range names {
		b, err := os.ReadFile(filepath.Join(sharedDir, dir, n))
		if err != nil {
			continue
		}
		for len(b) > 0 {
			k := min(len(b), 4096)
			if i := bytes.LastIndexByte(b[:k], '\n'); i > 0 && k < len(b) {
				k = i + 1
			}
			out = append(out, b[:k])
			b = b[k:]
		}
	}
	return out
}

// withChecksum returns "$body*hh" or "!body*hh" with the NMEA 0183
// checksum, the XOR of the body's bytes.
func withChecksum(start byte, body string) string {
	var x byte
	for i := 0; i < len(body); i++ {
		x ^= body[i]
	}
	const hex = "0123456789ABCDEF"
	return string(start) + body + "*" + string(hex[x>>4]) + string(hex[x&15])
}
