package fetch

import (
	"crypto/sha256"
	"encoding/hex"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"testing"
)

// Every entry is complete, every file passes the downloader's own checks,
// and a file has a sum exactly when it is not marked unverified.
func TestCatalogueWellFormed(t *testing.T) {
	key := regexp.MustCompile(`^[a-z0-9]+(-[a-z0-9]+)*$`)
	names := map[string]bool{}
	for _, d := range Catalogue() {
		if !key.MatchString(d.Name) || names[d.Name] {
			t.Errorf("dataset name %q is malformed or repeated", d.Name)
		}
		names[d.Name] = true
		for field, v := range map[string]string{"title": d.Title, "publisher": d.Publisher, "licence": d.Licence, "licence source": d.LicenceSource} {
			if v == "" {
				t.Errorf("%s: no %s", d.Name, field)
			}
		}
		if u, err := url.Parse(d.Landing); err != nil || u.Scheme != "https" || u.Host == "" {
			t.Errorf("%s: landing page %q is not an https URL", d.Name, d.Landing)
		}
		if len(d.Files) == 0 {
			t.Errorf("%s: no files", d.Name)
		}
		local := map[string]bool{}
		for _, f := range d.Files {
			if err := checkFile(f); err != nil {
				t.Errorf("%s: %v", d.Name, err)
			}
			if u, err := url.Parse(f.URL); err != nil || u.Scheme != "https" || u.Host == "" {
				t.Errorf("%s: %s: URL %q is not https", d.Name, f.Name, f.URL)
			}
			if !f.Unverified && f.Size <= 0 {
				t.Errorf("%s: %s: a verified file needs its size", d.Name, f.Name)
			}
			if f.Note == "" {
				t.Errorf("%s: %s: no note on where size and sum come from", d.Name, f.Name)
			}
			out := []string{f.Name}
			if f.Archive != NoArchive {
				out = append(out, archiveStem(f.Name))
			}
			for _, o := range out {
				if local[o] {
					t.Errorf("%s: %q is used twice in the dataset's folder", d.Name, o)
				}
				local[o] = true
			}
		}
		if got, ok := Lookup(d.Name); !ok || got.Title != d.Title {
			t.Errorf("Lookup(%q) = %v, %v", d.Name, got.Name, ok)
		}
	}
	if _, ok := Lookup("no-such-dataset"); ok {
		t.Error("Lookup found a name that is not in the catalogue")
	}
	if len(Names()) != len(Catalogue()) {
		t.Error("Names and Catalogue disagree")
	}
}

// The sizes and sums of the verified files are those of the copies in the
// shared datasets folder beside the project, which their SOURCE.md files
// say were taken from the pinned upstream commits (byte for byte for the
// data files). Every verified file of the catalogue must be covered here.
func TestCatalogueSumsMatchSharedCopies(t *testing.T) {
	shared := filepath.Join("..", "..", "..", "shared", "datasets")
	if _, err := os.Stat(shared); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("shared datasets folder missing under CI: %v", err)
		}
		t.Skipf("shared datasets folder not present (expected beside the project at ../shared/datasets): %v", err)
	}
	copies := map[string]map[string]string{ // dataset -> catalogue file name -> shared path
		"ilc20-sample": {
			"5dda68e89191710006b574b3.txt": "smartphone-imu-waypoints-ilc20/5dda68e89191710006b574b3.txt",
			"floor_info.json":              "smartphone-imu-waypoints-ilc20/floor_info.json",
			"LICENSE":                      "smartphone-imu-waypoints-ilc20/LICENSE.MIT.txt",
		},
		"gpsd-nmea-logs": {
			"bundg_zeus_9.log": "nmea-gpsd-logs/bundg_zeus_9.log",
			"haicom-305N.log":  "nmea-gpsd-logs/haicom-305N.log",
			"nmea-rtk.log":     "nmea-gpsd-logs/nmea-rtk.log",
			"ais-nmea.log":     "nmea-gpsd-logs/ais-nmea.log",
			"COPYING":          "nmea-gpsd-logs/COPYING.gpsd.txt",
		},
		"gpxpy-tracks": {
			"cerknicko-jezero.gpx":        "gpx-gpxpy-tracks/cerknicko-jezero.gpx",
			"around-visnjan-with-car.gpx": "gpx-gpxpy-tracks/around-visnjan-with-car.gpx",
			"LICENSE.txt":                 "gpx-gpxpy-tracks/LICENSE.Apache-2.0.txt",
		},
		"broad-trial21": {
			"LICENSE": "broad-imu-mocap/LICENSE.CC-BY-4.0.txt",
		},
	}
	for _, d := range Catalogue() {
		for _, f := range d.Files {
			if f.Unverified {
				continue
			}
			rel, ok := copies[d.Name][f.Name]
			if !ok {
				t.Errorf("%s: %s has a sum that no shared copy checks", d.Name, f.Name)
				continue
			}
			b, err := os.ReadFile(filepath.Join(shared, rel))
			if err != nil {
				t.Errorf("%s: %v", d.Name, err)
				continue
			}
			sum := sha256.Sum256(b)
			if got := hex.EncodeToString(sum[:]); got != f.SHA256 || int64(len(b)) != f.Size {
				t.Errorf("%s: %s: catalogue %d bytes sha256 %s, shared copy %s has %d bytes sha256 %s",
					d.Name, f.Name, f.Size, f.SHA256, rel, len(b), got)
			}
		}
	}
}

func TestArchiveStem(t *testing.T) {
	for in, want := range map[string]string{
		"AIS_2022_01_03.zip": "AIS_2022_01_03", "x.tar.gz": "x", "x.tgz": "x", "room.tar": "room", "blob": "blob.d", ".zip": ".zip.d",
	} {
		if got := archiveStem(in); got != want {
			t.Errorf("archiveStem(%q) = %q, want %q", in, got, want)
		}
	}
}
