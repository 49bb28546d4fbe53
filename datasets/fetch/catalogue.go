package fetch

import "strings"

// Archive says how a downloaded file is unpacked.
type Archive int

const (
	NoArchive Archive = iota // used as downloaded
	Zip                      // zip archive
	TarGz                    // gzip-compressed tar archive
	Tar                      // uncompressed tar archive
)

func (a Archive) String() string {
	switch a {
	case NoArchive:
		return "none"
	case Zip:
		return "zip"
	case TarGz:
		return "tar.gz"
	case Tar:
		return "tar"
	}
	return "unknown"
}

// File is one file of a dataset.
type File struct {
	Name    string  // local file name: one path element, unique within the dataset
	URL     string  // where the publisher serves it
	Size    int64   // bytes; 0 when not known
	SHA256  string  // lower-case hex; empty exactly when Unverified
	Archive Archive // how to unpack it after verification

	// Unverified is set when no checksum is known: the content that
	// arrives cannot be checked, so such a file is only downloaded when
	// the caller accepts that.
	Unverified bool
	// Note says where the size and sum come from, or why they are missing.
	Note string
}

// Dataset is one catalogue entry.
type Dataset struct {
	Name      string // our short key: lower case letters, digits and '-'
	Title     string
	Publisher string
	Landing   string // the publisher's page for the dataset
	Licence   string // the licence as the publisher states it
	// LicenceSource says where the licence statement comes from, and says
	// so when it is from memory and was not re-checked.
	LicenceSource string
	Note          string // what the data are useful for and known caveats
	Files         []File
}

// UnverifiedFiles returns the names of the files without a known sum.
func (d Dataset) UnverifiedFiles() []string {
	var names []string
	for _, f := range d.Files {
		if f.Unverified {
			names = append(names, f.Name)
		}
	}
	return names
}

// Size returns the total size of the files and whether every size is known.
func (d Dataset) Size() (total int64, known bool) {
	known = true
	for _, f := range d.Files {
		if f.Size <= 0 {
			known = false
		}
		total += f.Size
	}
	return total, known
}

// Lookup returns the catalogue entry with the given name.
func Lookup(name string) (Dataset, bool) {
	for _, d := range Catalogue() {
		if d.Name == name {
			return d, true
		}
	}
	return Dataset{}, false
}

// Names returns the names of the catalogue entries in catalogue order.
func Names() []string {
	cat := Catalogue()
	names := make([]string, len(cat))
	for i, d := range cat {
		names[i] = d.Name
	}
	return names
}

// Pinned upstream commits from which the copies in the shared datasets folder
// beside the project were taken (see each folder's SOURCE.md); the sizes and
// sums below are those of the copies, and the catalogue test checks them.
const (
	ilcRepo   = "https://raw.githubusercontent.com/location-competition/indoor-location-competition-20/8ab177cd7be2700442714b7d13fa452bedc685f5/"
	gpsdRepo  = "https://raw.githubusercontent.com/ntpsec/gpsd/46977faa8f94eb036ca68c24a3fc0d233732e707/"
	gpxpyRepo = "https://raw.githubusercontent.com/tkrajina/gpxpy/017d9961ee9aa86ccdbf5bb50a4e2341d5c42f4b/"
	broadRepo = "https://raw.githubusercontent.com/dlaidig/broad/7e2f8189bb4a3ac91eae32c69b6bc87f08a6e2ad/"
)

func sharedNote(folder string) string {
	return "size and sum of the byte-for-byte copy in shared/datasets/" + folder
}

func sharedLicenceNote(folder string) string {
	return "size and sum of the copy in shared/datasets/" + folder +
		" (its SOURCE.md says the licence file was copied; a changed upstream file fails the check)"
}

// Catalogue returns the datasets estbench can fetch, in a fixed order. The
// slice is new on every call.
func Catalogue() []Dataset {
	return []Dataset{
		{
			Name:          "ilc20-sample",
			Title:         "Indoor Location Competition 2.0 sample: one smartphone IMU trace with surveyor waypoints (site1, floor F3)",
			Publisher:     "Microsoft Research and XYZ10, Inc.",
			Landing:       "https://github.com/location-competition/indoor-location-competition-20",
			Licence:       "MIT (repository LICENSE, Copyright (c) 2017-2020 XYZ10, Inc.)",
			LicenceSource: "repository README and LICENSE at the pinned commit; the full competition data set elsewhere has its own terms",
			Note:          "Android accelerometer, gyroscope, magnetometer and rotation vector at about 50 Hz for 31.8 s, with 12 ground-truth waypoints in metres on the floor map.",
			Files: []File{
				{Name: "5dda68e89191710006b574b3.txt", URL: ilcRepo + "data/site1/F3/path_data_files/5dda68e89191710006b574b3.txt",
					Size: 1019906, SHA256: "7bff138d89fcc80962521904f42feec728477b6168b7e6d1c156e03056063cb2", Note: sharedNote("smartphone-imu-waypoints-ilc20")},
				{Name: "floor_info.json", URL: ilcRepo + "data/site1/F3/floor_info.json",
					Size: 88, SHA256: "cd984f024ed6476716ef0d3ecdabebaf55c72bac581311f8a30eccc94076c7a0", Note: sharedNote("smartphone-imu-waypoints-ilc20")},
				{Name: "LICENSE", URL: ilcRepo + "LICENSE",
					Size: 1092, SHA256: "d495a7aeb1e62c737d3ee3b4afec91e24c94cec053b58d11df4e9d4713125ab8", Note: sharedNote("smartphone-imu-waypoints-ilc20")},
			},
		},
		{
			Name:          "gpsd-nmea-logs",
			Title:         "Four real receiver logs in NMEA 0183 (sailing boat with heading and wind, pedestrian, RTK at 10 Hz, GPS with raw AIS)",
			Publisher:     "GPSD project (regression-test captures contributed by users)",
			Landing:       "https://gpsd.io/",
			Licence:       "BSD-2-Clause (repository COPYING and the file headers)",
			LicenceSource: "COPYING and file headers at the pinned commit; ais-nmea.log has no licence line of its own and is covered by the repository-wide COPYING only",
			Note:          "The headers carry submitters' names and e-mail addresses.",
			Files: []File{
				{Name: "bundg_zeus_9.log", URL: gpsdRepo + "test/daemon/bundg_zeus_9.log",
					Size: 181768, SHA256: "a839b565e7cbed06ffaf219178c4272f02ec18e2bee180565cf61f18b00b0b64", Note: sharedNote("nmea-gpsd-logs")},
				{Name: "haicom-305N.log", URL: gpsdRepo + "test/daemon/haicom-305N.log",
					Size: 19957, SHA256: "92b298d5a784b8f15756addade2e2ebe23ef92ada941979fd81d20fe864b712c", Note: sharedNote("nmea-gpsd-logs")},
				{Name: "nmea-rtk.log", URL: gpsdRepo + "test/daemon/nmea-rtk.log",
					Size: 22367, SHA256: "f2197867806cbc15a64320ef5a537d2ef3564b1799c8698b9ad39fe7d2eb4af8", Note: sharedNote("nmea-gpsd-logs")},
				{Name: "ais-nmea.log", URL: gpsdRepo + "test/daemon/ais-nmea.log",
					Size: 85460, SHA256: "ac2d9f36e45790677bf6dea5b553869309ef29de6ef40f78a873305dc197dd0e", Note: sharedNote("nmea-gpsd-logs")},
				{Name: "COPYING", URL: gpsdRepo + "COPYING",
					Size: 1725, SHA256: "fdf339997bbca9eaf507476b82fbcac608fc39a3d89b86b51e16db4c9f933716", Note: sharedLicenceNote("nmea-gpsd-logs")},
			},
		},
		{
			Name:          "gpxpy-tracks",
			Title:         "Two real GPS tracks in GPX 1.0 (Garmin log via GPSBabel) and GPX 1.1 (eTrex 20x car drive)",
			Publisher:     "Tomo Krajina (gpxpy test files)",
			Landing:       "https://github.com/tkrajina/gpxpy",
			Licence:       "Apache-2.0 (repository LICENSE.txt; the test files have no licence of their own)",
			LicenceSource: "repository LICENSE.txt and NOTICE.txt at the pinned commit",
			Note:          "Location data of a private person: treat as personal data.",
			Files: []File{
				{Name: "cerknicko-jezero.gpx", URL: gpxpyRepo + "test_files/cerknicko-jezero.gpx",
					Size: 36362, SHA256: "8bad699d4c32633dd65d98c0c8ae6372da5ed01c24f7e3afd9f6b642a9976671", Note: sharedNote("gpx-gpxpy-tracks")},
				{Name: "around-visnjan-with-car.gpx", URL: gpxpyRepo + "test_files/around-visnjan-with-car.gpx",
					Size: 12231, SHA256: "7c624f58f0675d00f780e258f0004ae7868429c8c9e577f38afda2974b507fe6", Note: sharedNote("gpx-gpxpy-tracks")},
				{Name: "LICENSE.txt", URL: gpxpyRepo + "LICENSE.txt",
					Size: 11358, SHA256: "cfc7749b96f63bd31c3c42b5c471bf756814053e847c10f3eb003417bc523d30", Note: sharedLicenceNote("gpx-gpxpy-tracks")},
			},
		},
		{
			Name:          "broad-trial21",
			Title:         "BROAD trial 21 (undisturbed, fast combined motion): IMU at 285.7 Hz with optical motion-capture orientation and position",
			Publisher:     "TU Berlin, Control Systems Group (Laidig, Caruso, Cereatti, Seel 2021, Data 6(7):72)",
			Landing:       "https://github.com/dlaidig/broad",
			Licence:       "CC BY 4.0 (cite the paper)",
			LicenceSource: "repository README: \"available under the terms of the Creative Commons BY 4.0 license\"",
			Note:          "The whole trial as a MATLAB file (the shared sample is a 20 s CSV slice of it). Whether the repository keeps the .mat files in Git LFS, which would make this URL give a pointer file, was not checked.",
			Files: []File{
				{Name: "21_undisturbed_fast_combined.mat", URL: broadRepo + "data_mat/21_undisturbed_fast_combined.mat",
					Unverified: true, Note: "no copy seen: the shared sample is a converted slice, so size and sum are unknown"},
				{Name: "trials.json", URL: broadRepo + "data_mat/trials.json",
					Unverified: true, Note: "no copy seen: size and sum unknown"},
				{Name: "LICENSE", URL: broadRepo + "LICENSE",
					Size: 18657, SHA256: "9ba9550ad48438d0836ddab3da480b3b69ffa0aac7b7878b5a0039e7ab429411", Note: sharedLicenceNote("broad-imu-mocap")},
			},
		},
		{
			Name:          "ais-marinecadastre-2022-01-03",
			Title:         "U.S. Coast Guard AIS vessel position reports for 2022-01-03, all U.S. waters (daily MarineCadastre CSV, zipped)",
			Publisher:     "MarineCadastre.gov (NOAA Office for Coastal Management and BOEM), data from the USCG Nationwide AIS",
			Landing:       "https://marinecadastre.gov/ais/",
			Licence:       "CC0 1.0 public domain dedication (a U.S. Government work)",
			LicenceSource: "MarineCadastre's own repository ocm-marinecadastre/ais-vessel-traffic, LICENSE.md, as recorded in the shared sample's SOURCE.md",
			Note:          "The day the shared New York Harbor sample was cut from. The download URL follows the publisher's scheme as remembered, not re-checked. Large (hundreds of MB zipped, from memory).",
			Files: []File{
				{Name: "AIS_2022_01_03.zip", URL: "https://coast.noaa.gov/htdata/CMSP/AISDataHandler/2022/AIS_2022_01_03.zip",
					Archive: Zip, Unverified: true, Note: "no copy seen: size and sum unknown; URL from memory"},
			},
		},
		{
			Name:          "tumvi-room1",
			Title:         "TUM VI visual-inertial dataset, sequence room1 (512x512, 16-bit, exported in the EuRoC/ASL mav0 layout) with motion-capture ground truth",
			Publisher:     "Technical University of Munich, Computer Vision Group (Schubert et al. 2018)",
			Landing:       "https://cvg.cit.tum.de/data/datasets/visual-inertial-dataset",
			Licence:       "CC BY 4.0",
			LicenceSource: "from memory of the dataset page, not re-checked",
			Note:          "IMU at 200 Hz, stereo images and motion-capture pose; the landing page and download URL are from memory, not re-checked. Large (over a GB, from memory).",
			Files: []File{
				{Name: "dataset-room1_512_16.tar", URL: "https://cdn3.vision.in.tum.de/tumvi/exported/euroc/512_16/dataset-room1_512_16.tar",
					Archive: Tar, Unverified: true, Note: "no copy seen: size and sum unknown; URL from memory"},
			},
		},
	}
}

// archiveStem returns the folder name an archive is extracted to: the file
// name without its archive suffix.
func archiveStem(name string) string {
	for _, suf := range []string{".tar.gz", ".tgz", ".zip", ".tar"} {
		if s, ok := strings.CutSuffix(name, suf); ok && s != "" {
			return s
		}
	}
	return name + ".d"
}
