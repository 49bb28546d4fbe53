package recorded

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"testing"
)

// The public samples live outside the project, in the shared datasets
// folder beside it (../shared/datasets from the project root; these tests
// run in datasets/recorded/).
var sharedRoot = filepath.Join("..", "..", "..", "shared", "datasets")

// sharedFile returns the path of a file of a shared sample after checking
// its SHA-256 against the one its SOURCE.md lists, so that the counts the
// tests take from SOURCE.md are those of this file. It skips the test when
// the sample is absent, and fails it when CI=true.
func sharedFile(t testing.TB, sample, file, sum string) string {
	t.Helper()
	p := filepath.Join(sharedRoot, sample, file)
	data, err := os.ReadFile(p)
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("shared sample %s missing under CI: %v", p, err)
		}
		t.Skipf("shared sample %s not present (expected beside the project at ../shared/datasets): %v", p, err)
	}
	h := sha256.Sum256(data)
	if got := hex.EncodeToString(h[:]); got != sum {
		t.Fatalf("%s: sha256 %s, SOURCE.md lists %s", p, got, sum)
	}
	return p
}

// SHA-256 sums as listed in each sample's SOURCE.md.
const (
	broadIMUSum   = "b0da9404dc2ab27614a44e2dae3ecbb8c1e12309d3873a6b674925e102cfcdfb"
	broadTruthSum = "e9b22446df6383fe40aa5a71a294fb91c2461cdf7c1206efdde1d7d5ae614a60"
	phoneTraceSum = "7bff138d89fcc80962521904f42feec728477b6168b7e6d1c156e03056063cb2"
)

func broadDir(t testing.TB) string {
	t.Helper()
	sharedFile(t, "broad-imu-mocap", "imu.csv", broadIMUSum)
	return filepath.Dir(sharedFile(t, "broad-imu-mocap", "groundtruth.csv", broadTruthSum))
}

func phoneTrace(t testing.TB) string {
	t.Helper()
	return sharedFile(t, "smartphone-imu-waypoints-ilc20", "5dda68e89191710006b574b3.txt", phoneTraceSum)
}

func broadMapping(t testing.TB) *Mapping {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("mappings", "broad-imu-mocap.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m, err := ParseMapping("broad-imu-mocap.toml", data)
	if err != nil {
		t.Fatal(err)
	}
	return m
}
