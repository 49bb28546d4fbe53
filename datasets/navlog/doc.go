// Package navlog reads navigation logs of public datasets: NMEA 0183
// receiver logs (GGA, RMC, VTG, GST, HDT, HDG, ZDA), AIS radio messages
// carried in !AIVDM/!AIVDO sentences, GPX 1.0/1.1 track files and AIS
// reports exported as CSV in the MarineCadastre layout. Every loader ends
// in the same record, Track: one vessel's or one device's time-ordered
// points.
//
// # Readers
//
// Each format has a streaming reader in the manner of bufio.Scanner: Scan
// advances to the next record, which a method such as Fix or Report
// returns and which stays valid until the next Scan; Err returns the
// first I/O or syntax error that stopped the reader (nil at a clean end).
// Readers own and reuse their buffers. Read...Tracks functions drain a
// reader and group its records into Tracks.
//
// # Errors
//
// Bad input never stops a reader: a line or field that cannot be used is
// skipped, counted, and recorded as an Issue that reads
// "file:line: field: message". The first 100 issues are kept (Issues);
// NumIssues counts them all. Only a failed read, or XML so broken that the
// GPX decoder cannot go on, is returned by Err.
//
// # Units
//
// Latitude and longitude are WGS-84 degrees, north and east positive.
// Point.Alt is metres above mean sea level as the sources give it (GGA
// altitude, GPX elevation), NaN when absent. Point.SOG is metres per
// second (one knot is 1852/3600 m/s exactly). Point.COG and Point.Heading
// are degrees clockwise from true north in [0, 360). Point.HorizStd is
// metres. Absent values are NaN. Times are UTC. Format-specific records
// (Fix, AISReport, AISCSVRow) document their own units; AIS speeds stay
// in knots there, as the messages send them.
package navlog
