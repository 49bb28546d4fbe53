package results

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"runtime"
	"runtime/debug"
	"strings"
	"time"
)

// Manifest records how a result folder was made: the tool, the machine, the
// suite and the files. CollectEnvironment fills the tool and machine part;
// the caller fills the rest.
type Manifest struct {
	Tool        string `json:"tool"`         // "estbench"
	Version     string `json:"version"`      // main module version, "(devel)" when unknown
	VCSRevision string `json:"vcs_revision"` // commit the binary was built from, "" when unknown
	VCSModified *bool  `json:"vcs_modified"` // the work tree had changes; null when unknown

	GoVersion  string `json:"go_version"`
	OS         string `json:"os"`
	Arch       string `json:"arch"`
	CPU        string `json:"cpu"` // model name, "unknown" where it cannot be read
	GOMAXPROCS int    `json:"gomaxprocs"`
	NumCPU     int    `json:"num_cpu"`

	Suite       string   `json:"suite"`
	SuiteSHA256 string   `json:"suite_sha256"` // of the canonical suite text
	Seed        uint64   `json:"seed"`
	Runs        int      `json:"runs"`
	Workers     int      `json:"workers"`
	Command     []string `json:"command"` // the command line, os.Args

	Start time.Time `json:"-"` // written as "start", UTC RFC 3339
	End   time.Time `json:"-"` // written as "end"

	Files []string `json:"files"` // output files, relative to the folder
}

// CollectEnvironment returns a Manifest with the tool, build and machine
// fields filled in.
func CollectEnvironment() Manifest {
	m := Manifest{
		Tool:       "estbench",
		Version:    "(devel)",
		GoVersion:  runtime.Version(),
		OS:         runtime.GOOS,
		Arch:       runtime.GOARCH,
		CPU:        cpuModel(),
		GOMAXPROCS: runtime.GOMAXPROCS(0),
		NumCPU:     runtime.NumCPU(),
	}
	if bi, ok := debug.ReadBuildInfo(); ok {
		m.fillBuild(bi)
	}
	return m
}

// fillBuild takes the version and VCS settings from the build information.
func (m *Manifest) fillBuild(bi *debug.BuildInfo) {
	if v := bi.Main.Version; v != "" {
		m.Version = v
	}
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			m.VCSRevision = s.Value
		case "vcs.modified":
			b := s.Value == "true"
			m.VCSModified = &b
		}
	}
}

// cpuModel reads the first "model name" of /proc/cpuinfo on Linux.
func cpuModel() string {
	if runtime.GOOS != "linux" {
		return "unknown"
	}
	f, err := os.Open("/proc/cpuinfo")
	if err != nil {
		return "unknown"
	}
	defer f.Close()
	return cpuModelFrom(f)
}

func cpuModelFrom(r io.Reader) string {
	sc := bufio.NewScanner(r)
	for sc.Scan() {
		key, val, ok := strings.Cut(sc.Text(), ":")
		if ok && strings.TrimSpace(key) == "model name" {
			if v := strings.TrimSpace(val); v != "" {
				return v
			}
		}
	}
	return "unknown"
}

// MarshalJSON writes Start and End as UTC RFC 3339 ("" when zero).
func (m Manifest) MarshalJSON() ([]byte, error) {
	type plain Manifest // without this method
	return json.Marshal(struct {
		plain
		Start string `json:"start"`
		End   string `json:"end"`
	}{plain(m), rfc3339(m.Start), rfc3339(m.End)})
}

// UnmarshalJSON reads what MarshalJSON writes.
func (m *Manifest) UnmarshalJSON(b []byte) error {
	type plain Manifest
	var v struct {
		plain
		Start string `json:"start"`
		End   string `json:"end"`
	}
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	*m = Manifest(v.plain)
	for _, t := range []struct {
		s   string
		dst *time.Time
	}{{v.Start, &m.Start}, {v.End, &m.End}} {
		if t.s == "" {
			continue
		}
		p, err := time.Parse(time.RFC3339, t.s)
		if err != nil {
			return fmt.Errorf("results: manifest time: %w", err)
		}
		*t.dst = p
	}
	return nil
}

func rfc3339(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.UTC().Format(time.RFC3339)
}

// WriteManifest writes m as indented JSON to path, atomically.
func WriteManifest(path string, m Manifest) error {
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("results: manifest: %w", err)
	}
	b = append(b, '\n')
	return WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// ReadManifest reads a manifest written by WriteManifest.
func ReadManifest(path string) (Manifest, error) {
	var m Manifest
	b, err := os.ReadFile(path)
	if err != nil {
		return m, fmt.Errorf("results: %w", err)
	}
	if err := json.Unmarshal(b, &m); err != nil {
		return m, fmt.Errorf("results: %s: %w", path, err)
	}
	return m, nil
}
