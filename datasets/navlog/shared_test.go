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

// fuzzSeeds returns seeds for a fuzz target cut from sample files, nil
// if the samples are absent: up to 8 pieces of about 1 KiB per file, cut
// at line ends and spread over the file. Small seeds keep each execution
// and the fuzzer's minimisation of new inputs quick.
func fuzzSeeds(dir string, names ...string) [][]byte {
	const piece, perFile = 1024, 8
	var out [][]byte
	for _, n := range names {
		b, err := os.ReadFile(filepath.Join(sharedDir, dir, n))
		if err != nil {
			continue
		}
		step := max(len(b)/perFile, piece)
		for off := 0; off < len(b); off += step {
			s := b[off:min(len(b), off+piece)]
			if i := bytes.LastIndexByte(s, '\n'); i > 0 && off+piece < len(b) {
				s = s[:i+1]
			}
			out = append(out, s)
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
