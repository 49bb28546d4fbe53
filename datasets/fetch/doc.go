// Package fetch holds the catalogue of public datasets that estbench knows
// how to download, and the downloader that brings one into a local folder:
// resumable HTTP downloads, SHA-256 verification and safe archive extraction.
//
// # Catalogue
//
// [Catalogue] is the one explicit list of datasets. Each [Dataset] states its
// publisher, landing page and licence (and where the licence statement comes
// from), and lists its [File]s with URL, size and SHA-256. A file whose sum is
// not known carries an empty SHA256 and Unverified set: such files are never
// given a made-up sum, and [Fetcher.Fetch] refuses a dataset that has one
// unless AcceptUnverified is set ([ErrUnverified]).
//
// # Downloads
//
// A file is written to NAME.part in the target folder and renamed to NAME
// only after its size and SHA-256 check out. An interrupted download keeps
// the .part file; the next attempt asks for the rest with an HTTP Range
// request. A server that ignores the range (200 instead of 206), answers a
// different range, or says the range is past its end (416) makes the
// download start again from byte zero, as does a .part file longer than the
// catalogue's size. A file whose sum does not match is moved to NAME.bad and
// a [*ChecksumError] names the file and both sums. A file already present
// with the right sum is not downloaded again.
//
// Requests carry a User-Agent of our own and Accept-Encoding: identity (so
// byte ranges refer to the stored bytes). Failures that may pass (network
// errors, a body cut short, a stalled transfer, HTTP 408, 429 and 5xx) are
// retried a bounded number of times with exponential backoff; every retry
// resumes from the .part file. Other HTTP errors, size mismatches and
// context cancellation are returned at once.
//
// # Archives
//
// [Extract] unpacks zip, tar and tar.gz archives into a folder and never
// writes outside it: entries with "..", absolute or drive-letter paths,
// backslashes, symbolic links whose target is absolute or climbs out of the
// folder, links whose path runs through another link, hard links to
// anything but a regular file extracted before them, and device, pipe or
// socket entries are refused with an [*ArchiveError] naming the entry. All
// writes go through an [os.Root] as a second wall. [Limits] caps the number
// of entries and the total bytes, checked against the declared sizes before
// an entry is written and against the bytes actually copied while it is.
// [Fetcher.Fetch] extracts into a temporary folder that is renamed into
// place only when the whole archive has been unpacked, and removed
// otherwise.
//
// # Errors and output
//
// Library code never prints: progress is reported through the optional
// Fetcher.Progress callback. Errors name the file, URL or archive entry.
package fetch
