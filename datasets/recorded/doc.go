// Package recorded holds real sensor recordings in one normalised form,
// Recording, reads and writes it as an Arrow IPC file, and loads it from the
// layouts public inertial datasets use: column-mapped CSV/TSV described by a
// small TOML mapping, the ASL layout of visual-inertial datasets, and the
// text trace of a smartphone logger. SequenceTo turns a recording into the
// datasets.Sequence that benchmark problems use.
//
// # Time and units
//
// T holds seconds from the recording's time origin: Meta.Start when the
// source has absolute time (then T[0] is usually 0 or small), otherwise the
// zero of the source's own time base (Meta.Start is then the zero time).
// Loaders key rows on integer nanoseconds, so files are joined on exact
// times and T is the nearest float64 to the source's time. Values are in
// canonical units, converted from the source's: rad/s, m/s^2, uT, m, m/s,
// degrees for latitude and longitude, 1 for quaternion components
// (stored scalar first: w, x, y, z).
//
// # Missing samples
//
// Every column has one value per row of T. A row where a sensor has no
// sample (another sensor sampled then, or the source left the field empty
// or NaN) is null: its bit in Column.Valid is clear and its value is NaN.
// Valid is nil when every row is valid.
//
// # Files
//
// WriteFile writes one Arrow IPC file per recording through a temporary
// file renamed into place; ReadFile and Map read it back memory-mapped with
// no parsing, bit-for-bit. The schema is documented in README.md and in
// WriteFile.
//
// # Errors
//
// Every data mistake is a *LoadError naming file, line and field. Loaders
// skip a bad row and go on; when rows were skipped they return the recording
// of the good rows together with an ErrorList in file order (after 50 row
// errors a loader stops reading and says so in one more entry). Callers
// that must not use partial data treat any error as failure. Decode checks
// the schema and metadata of a recording; a file damaged inside its
// flatbuffers, on which arrow-go panics, is reported as a corrupt-file
// error naming the file. arrow-go trusts the counts a file declares and
// allocates by them, beyond what any recover can catch (found by
// FuzzDecode), so Decode first checks every count, offset and length in
// the footer and the record batch's metadata against the file size.
//
// # Memory
//
// Loaders stream their input and keep only the parsed columns, sized from
// the file size; while a recording is assembled it costs its Arrow size
// plus about 20 bytes a row of each source (time and line of each
// sample). Row times are compared as float64 seconds from the origin, so
// two times too close to tell apart are reported like a duplicate.
package recorded
