package fetch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
)

// DefaultUserAgent is sent when Fetcher.UserAgent is empty.
const DefaultUserAgent = "estbench-fetch/1"

// maxBackoff caps the wait between two tries.
const maxBackoff = 30 * time.Second

// Fetcher downloads catalogue entries. The zero value is ready to use.
type Fetcher struct {
	// Client makes the requests. If nil, [NewHTTPClient] is used.
	Client *http.Client
	// UserAgent is sent with every request. If empty, DefaultUserAgent.
	UserAgent string
	// Mirror, if set, is a base URL that replaces the publisher's server:
	// https://host/a/b is fetched from Mirror + "/host/a/b".
	Mirror string
	// Attempts is the number of tries per file. If zero, 4 are made.
	Attempts int
	// Backoff is the wait before the second try; it doubles for every later
	// try, up to 30 s. If zero, 1 s is used.
	Backoff time.Duration
	// StallTimeout ends a request that receives no data for that long
	// (a try that may be retried). If zero, 60 s is used.
	StallTimeout time.Duration
	// MaxDownload caps the bytes of a file whose size the catalogue does not
	// give. If zero, 64 GiB is used.
	MaxDownload int64
	// AcceptUnverified allows files without a known sum to be downloaded.
	AcceptUnverified bool
	// Limits bounds what each archive may unpack to.
	Limits Limits
	// Progress, if set, is called as bytes arrive with the file's name, the
	// bytes present so far (a resumed part included) and the expected total
	// (-1 when unknown).
	Progress func(file string, done, total int64)
}

// FileResult says what happened to one file.
type FileResult struct {
	Name     string // the file's name in the catalogue
	Path     string // where it is now
	Size     int64  // bytes
	SHA256   string // the sum of what is on disk
	Verified bool   // the sum matched the catalogue's

	Reused      bool   // already present (with the right sum when one is known); nothing was downloaded
	Tries       int    // tries made (0 when reused); a try is one request, or two when it restarts from byte zero
	ResumedFrom int64  // bytes of an earlier partial download that were kept (first resumed request)
	Restarted   bool   // a partial download was discarded and the file downloaded from byte zero
	Quarantined string // an earlier copy with the wrong sum was moved here

	Extracted     string       // the folder an archive was unpacked into
	ExtractReused bool         // that folder was there from an earlier fetch
	Unpacked      ExtractStats // what the archive unpacked to (zero when reused)
}

// Result says what happened to a dataset.
type Result struct {
	Dataset string
	Dir     string
	Files   []FileResult
}

// ErrUnverified is matched by [*UnverifiedError].
var ErrUnverified = errors.New("fetch: files without a known checksum")

// UnverifiedError refuses a dataset whose files have no known sum.
type UnverifiedError struct {
	Dataset string
	Files   []string
}

func (e *UnverifiedError) Error() string {
	return fmt.Sprintf("fetch: %s: no sha256 is known for %s, so what arrives cannot be checked against the publisher's files",
		e.Dataset, strings.Join(e.Files, ", "))
}

// Is reports whether target is [ErrUnverified].
func (e *UnverifiedError) Is(target error) bool { return target == ErrUnverified }

// ChecksumError reports a downloaded file whose size or sum is wrong.
type ChecksumError struct {
	File              string // the file's name
	Want, Got         string // expected and actual sha256 (Want empty when unknown)
	WantSize, GotSize int64  // expected (0 when unknown) and actual size
	Quarantine        string // where the file was moved
}

func (e *ChecksumError) Error() string {
	if e.WantSize > 0 && e.WantSize != e.GotSize {
		return fmt.Sprintf("fetch: %s: size mismatch: expected %d bytes, got %d (sha256 %s); the download was moved to %s",
			e.File, e.WantSize, e.GotSize, e.Got, e.Quarantine)
	}
	return fmt.Sprintf("fetch: %s: sha256 mismatch: expected %s, got %s; the download was moved to %s",
		e.File, e.Want, e.Got, e.Quarantine)
}

// HTTPError is an answer other than the content asked for.
type HTTPError struct {
	URL    string
	Status int
	Text   string // the status line's text
}

func (e *HTTPError) Error() string {
	return fmt.Sprintf("fetch: GET %s: %d %s", e.URL, e.Status, e.Text)
}

// retryable marks a failure that another try may get past.
type retryable struct{ err error }

func (r *retryable) Error() string { return r.err.Error() }
func (r *retryable) Unwrap() error { return r.err }

var errStalled = errors.New("stalled")

// NewHTTPClient returns the client used when Fetcher.Client is nil:
// timeouts on connecting, the TLS handshake and the response headers (the
// body is guarded by Fetcher.StallTimeout instead of a total timeout), the
// environment's proxy settings, and redirects refused when they go from
// https to http or number more than 10.
func NewHTTPClient() *http.Client {
	return &http.Client{
		Transport: &http.Transport{
			Proxy:                 http.ProxyFromEnvironment,
			DialContext:           (&net.Dialer{Timeout: 30 * time.Second, KeepAlive: 30 * time.Second}).DialContext,
			TLSHandshakeTimeout:   15 * time.Second,
			ResponseHeaderTimeout: 60 * time.Second,
			IdleConnTimeout:       90 * time.Second,
			ForceAttemptHTTP2:     true,
		},
		CheckRedirect: checkRedirect,
	}
}

func checkRedirect(req *http.Request, via []*http.Request) error {
	if len(via) >= 10 {
		return errors.New("fetch: more than 10 redirects")
	}
	if len(via) > 0 && via[len(via)-1].URL.Scheme == "https" && req.URL.Scheme != "https" {
		return fmt.Errorf("fetch: refusing a redirect from https to %s (%s)", req.URL.Scheme, req.URL.Redacted())
	}
	return nil
}

// DefaultDir returns the folder a dataset is fetched into by default:
// estbench/datasets/NAME under the user's cache folder.
func DefaultDir(name string) (string, error) {
	c, err := os.UserCacheDir()
	if err != nil {
		return "", fmt.Errorf("fetch: no user cache folder: %w", err)
	}
	return filepath.Join(c, "estbench", "datasets", name), nil
}

// withClient returns f itself when it has a client, else a copy with a new
// default client (one per Fetch or Download call, shared by its requests).
func (f *Fetcher) withClient() *Fetcher {
	if f.Client != nil {
		return f
	}
	g := *f
	g.Client = NewHTTPClient()
	return &g
}

func (f *Fetcher) userAgent() string {
	if f.UserAgent != "" {
		return f.UserAgent
	}
	return DefaultUserAgent
}

func (f *Fetcher) attempts() int {
	if f.Attempts > 0 {
		return f.Attempts
	}
	return 4
}

// backoff returns the wait after the given failed try (1-based).
func (f *Fetcher) backoff(try int) time.Duration {
	d := f.Backoff
	if d <= 0 {
		d = time.Second
	}
	for i := 1; i < try && d < maxBackoff; i++ {
		d *= 2
	}
	return min(d, maxBackoff)
}

func (f *Fetcher) stallTimeout() time.Duration {
	if f.StallTimeout > 0 {
		return f.StallTimeout
	}
	return 60 * time.Second
}

func (f *Fetcher) maxDownload() int64 {
	if f.MaxDownload > 0 {
		return f.MaxDownload
	}
	return 64 << 30
}

// resolve applies the mirror to a publisher's URL.
func (f *Fetcher) resolve(raw string) (string, error) {
	u, err := url.Parse(raw)
	if err != nil || u.Host == "" || (u.Scheme != "https" && u.Scheme != "http") {
		return "", fmt.Errorf("fetch: %q is not an http(s) URL", raw)
	}
	if f.Mirror == "" {
		return raw, nil
	}
	s := strings.TrimSuffix(f.Mirror, "/") + "/" + u.Host + u.EscapedPath()
	if u.RawQuery != "" {
		s += "?" + u.RawQuery
	}
	return s, nil
}

// Fetch downloads every file of d into dir (created if needed), verifies
// each and unpacks the archives. It refuses a dataset with unverified files
// unless AcceptUnverified is set. On error the result holds the files done
// so far.
func (f *Fetcher) Fetch(ctx context.Context, d Dataset, dir string) (Result, error) {
	f = f.withClient()
	res := Result{Dataset: d.Name, Dir: dir}
	if names := d.UnverifiedFiles(); len(names) > 0 && !f.AcceptUnverified {
		return res, &UnverifiedError{Dataset: d.Name, Files: names}
	}
	seen := map[string]bool{}
	for _, file := range d.Files {
		if seen[file.Name] {
			return res, fmt.Errorf("fetch: %s: two files named %q", d.Name, file.Name)
		}
		seen[file.Name] = true
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return res, fmt.Errorf("fetch: %w", err)
	}
	for _, file := range d.Files {
		fr, err := f.Download(ctx, file, dir)
		if err == nil && file.Archive != NoArchive {
			err = f.unpack(file, dir, &fr)
		}
		res.Files = append(res.Files, fr)
		if err != nil {
			return res, err
		}
	}
	return res, nil
}

// unpack extracts a verified archive into dir/<stem> through a temporary
// folder renamed into place.
func (f *Fetcher) unpack(file File, dir string, fr *FileResult) error {
	dest := filepath.Join(dir, archiveStem(file.Name))
	if fi, err := os.Lstat(dest); err == nil {
		if fi.IsDir() && fr.Reused {
			fr.Extracted, fr.ExtractReused = dest, true
			return nil
		}
		return fmt.Errorf("fetch: %s is there from an earlier download; remove it to unpack the new %s", dest, file.Name)
	}
	tmp, err := os.MkdirTemp(dir, "."+archiveStem(file.Name)+".unpacking-")
	if err != nil {
		return fmt.Errorf("fetch: %w", err)
	}
	stats, err := Extract(fr.Path, file.Archive, tmp, f.Limits)
	if err == nil {
		err = os.Chmod(tmp, 0o755)
	}
	if err == nil {
		err = os.Rename(tmp, dest)
	}
	if err != nil {
		os.RemoveAll(tmp)
		return err
	}
	fr.Extracted, fr.Unpacked = dest, stats
	return nil
}

// Download brings one file into dir/NAME: it reuses a copy already there
// with the right sum, resumes dir/NAME.part, retries failures that may pass
// and verifies size and sum before renaming the part into place.
func (f *Fetcher) Download(ctx context.Context, file File, dir string) (FileResult, error) {
	f = f.withClient()
	final := filepath.Join(dir, file.Name)
	res := FileResult{Name: file.Name, Path: final}
	if err := checkFile(file); err != nil {
		return res, err
	}
	if file.Unverified && !f.AcceptUnverified {
		return res, &UnverifiedError{Files: []string{file.Name}}
	}
	if fi, err := os.Lstat(final); err == nil {
		if !fi.Mode().IsRegular() {
			return res, fmt.Errorf("fetch: %s exists and is not a regular file", final)
		}
		sum, n, err := hashFile(final)
		if err != nil {
			return res, err
		}
		if file.Unverified || sum == file.SHA256 && (file.Size <= 0 || n == file.Size) {
			res.Size, res.SHA256, res.Verified, res.Reused = n, sum, !file.Unverified, true
			return res, nil
		}
		res.Quarantined = final + ".bad"
		if err := os.Rename(final, res.Quarantined); err != nil {
			return res, fmt.Errorf("fetch: %w", err)
		}
	}
	src, err := f.resolve(file.URL)
	if err != nil {
		return res, err
	}
	part := final + ".part"
	for try := 1; ; try++ {
		res.Tries = try
		err := f.try(ctx, src, file, part, &res)
		if err == nil {
			break
		}
		var r *retryable
		if !errors.As(err, &r) {
			return res, err
		}
		if try >= f.attempts() {
			return res, fmt.Errorf("%w (gave up after %d tries; the partial file %s is kept for the next attempt)", r.err, try, part)
		}
		t := time.NewTimer(f.backoff(try))
		select {
		case <-ctx.Done():
			t.Stop()
			return res, fmt.Errorf("fetch: %s: %w", file.Name, ctx.Err())
		case <-t.C:
		}
	}
	sum, n, err := hashFile(part)
	if err != nil {
		return res, err
	}
	if file.Size > 0 && n != file.Size || !file.Unverified && sum != file.SHA256 {
		bad := final + ".bad"
		if err := os.Rename(part, bad); err != nil {
			return res, fmt.Errorf("fetch: %w", err)
		}
		return res, &ChecksumError{File: file.Name, Want: file.SHA256, Got: sum, WantSize: file.Size, GotSize: n, Quarantine: bad}
	}
	if err := os.Rename(part, final); err != nil {
		return res, fmt.Errorf("fetch: %w", err)
	}
	res.Size, res.SHA256, res.Verified = n, sum, !file.Unverified
	return res, nil
}

func checkFile(file File) error {
	if file.Name == "" || file.Name == "." || file.Name == ".." || strings.ContainsAny(file.Name, "/\\\x00") || strings.HasSuffix(file.Name, ".part") || strings.HasSuffix(file.Name, ".bad") {
		return fmt.Errorf("fetch: file name %q is not a plain file name", file.Name)
	}
	if file.Unverified != (file.SHA256 == "") {
		return fmt.Errorf("fetch: %s: a file has a sha256 exactly when it is not marked unverified", file.Name)
	}
	if !file.Unverified {
		if b, err := hex.DecodeString(file.SHA256); err != nil || len(b) != sha256.Size || strings.ToLower(file.SHA256) != file.SHA256 {
			return fmt.Errorf("fetch: %s: sha256 %q is not 64 lower-case hex digits", file.Name, file.SHA256)
		}
	}
	return nil
}

func hashFile(name string) (sum string, n int64, err error) {
	fh, err := os.Open(name)
	if err != nil {
		return "", 0, fmt.Errorf("fetch: %w", err)
	}
	defer fh.Close()
	h := sha256.New()
	n, err = io.Copy(h, fh)
	if err != nil {
		return "", n, fmt.Errorf("fetch: reading %s: %w", name, err)
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

// try makes one round of requests: normally one, two when the partial file
// has to be discarded after the first answer.
func (f *Fetcher) try(ctx context.Context, src string, file File, part string, res *FileResult) error {
	offset := int64(0)
	if fi, err := os.Lstat(part); err == nil {
		if !fi.Mode().IsRegular() {
			return fmt.Errorf("fetch: %s exists and is not a regular file", part)
		}
		offset = fi.Size()
	} else if !errors.Is(err, os.ErrNotExist) {
		return fmt.Errorf("fetch: %w", err)
	}
	if file.Size > 0 && offset > file.Size {
		if err := os.Truncate(part, 0); err != nil {
			return fmt.Errorf("fetch: %w", err)
		}
		offset, res.Restarted = 0, true
	}
	if file.Size > 0 && offset == file.Size {
		return nil
	}
	restart, err := f.request(ctx, src, file, part, offset, res)
	if restart && err == nil {
		_, err = f.request(ctx, src, file, part, 0, res)
	}
	return err
}

// request makes one GET for the bytes from offset on and appends them to the
// part file. It returns restart when the part file was discarded and the
// download should begin again from byte zero.
func (f *Fetcher) request(parent context.Context, src string, file File, part string, offset int64, res *FileResult) (restart bool, err error) {
	ctx, cancel := context.WithCancelCause(parent)
	defer cancel(nil)
	stall := f.stallTimeout()
	timer := time.AfterFunc(stall, func() { cancel(errStalled) })
	defer timer.Stop()

	req, err := http.NewRequestWithContext(ctx, http.MethodGet, src, nil)
	if err != nil {
		return false, fmt.Errorf("fetch: %w", err)
	}
	req.Header.Set("User-Agent", f.userAgent())
	req.Header.Set("Accept-Encoding", "identity")
	if offset > 0 {
		req.Header.Set("Range", "bytes="+strconv.FormatInt(offset, 10)+"-")
	}
	resp, err := f.Client.Do(req)
	if err != nil {
		return false, f.failure(parent, ctx, file.Name, src, 0, err)
	}
	defer resp.Body.Close()

	discard := func() (bool, error) {
		res.Restarted = true
		if err := os.Truncate(part, 0); err != nil {
			return false, fmt.Errorf("fetch: %w", err)
		}
		return true, nil
	}
	flags := os.O_WRONLY | os.O_CREATE
	switch code := resp.StatusCode; {
	case code == http.StatusPartialContent && offset > 0:
		start, total, ok := parseContentRange(resp.Header.Get("Content-Range"))
		if !ok || start != offset {
			return discard()
		}
		if file.Size > 0 && total >= 0 && total != file.Size {
			return false, sizeError(file, src, total)
		}
		flags |= os.O_APPEND
		if res.ResumedFrom == 0 {
			res.ResumedFrom = offset
		}
	case code == http.StatusOK:
		if offset > 0 {
			res.Restarted = true
		}
		if file.Size > 0 && resp.ContentLength >= 0 && resp.ContentLength != file.Size {
			return false, sizeError(file, src, resp.ContentLength)
		}
		flags |= os.O_TRUNC
		offset = 0
	case code == http.StatusRequestedRangeNotSatisfiable && offset > 0:
		// The part reaches (or passes) the remote end.
		if _, total, ok := parseContentRange(resp.Header.Get("Content-Range")); ok && total == offset {
			return false, nil
		}
		return discard()
	case code == http.StatusRequestTimeout || code == http.StatusTooManyRequests || code >= 500:
		return false, &retryable{&HTTPError{URL: src, Status: code, Text: http.StatusText(code)}}
	default:
		return false, &HTTPError{URL: src, Status: code, Text: http.StatusText(code)}
	}

	total := int64(-1)
	switch {
	case file.Size > 0:
		total = file.Size
	case resp.ContentLength >= 0:
		total = offset + resp.ContentLength
	}
	limit := f.maxDownload() - offset
	if file.Size > 0 {
		limit = file.Size - offset
	}
	out, err := os.OpenFile(part, flags, 0o644)
	if err != nil {
		return false, fmt.Errorf("fetch: %w", err)
	}
	n, copyErr := f.copy(out, resp.Body, limit+1, file.Name, offset, total, timer, stall)
	closeErr := out.Close()
	switch {
	case n > limit:
		if file.Size > 0 {
			return false, fmt.Errorf("fetch: GET %s: the server sent more than the catalogue's %d bytes", src, file.Size)
		}
		return false, fmt.Errorf("fetch: GET %s: more than the limit of %d bytes", src, f.maxDownload())
	case copyErr != nil:
		return false, f.failure(parent, ctx, file.Name, src, offset+n, copyErr)
	case closeErr != nil:
		return false, fmt.Errorf("fetch: %w", closeErr)
	case file.Size > 0 && offset+n < file.Size:
		return false, &retryable{fmt.Errorf("fetch: GET %s: the body ended after %d of %d bytes", src, offset+n, file.Size)}
	}
	return false, nil
}

// failure classifies a transport error: the caller's cancellation is final,
// anything else (a stall, a reset, a cut body) may pass on another try.
func (f *Fetcher) failure(parent, ctx context.Context, name, src string, have int64, err error) error {
	if parent.Err() != nil {
		return fmt.Errorf("fetch: %s: %w", name, parent.Err())
	}
	if errors.Is(context.Cause(ctx), errStalled) {
		err = fmt.Errorf("no data for %v", f.stallTimeout())
	}
	return &retryable{fmt.Errorf("fetch: GET %s: cut off with %d bytes on disk: %w", src, have, err)}
}

func sizeError(file File, src string, remote int64) error {
	return fmt.Errorf("fetch: GET %s: the server's file is %d bytes, the catalogue says %d for %s", src, remote, file.Size, file.Name)
}

// copy appends up to max bytes of body to out, pushing back the stall timer
// and reporting progress as data arrive.
func (f *Fetcher) copy(out io.Writer, body io.Reader, max int64, name string, offset, total int64, timer *time.Timer, stall time.Duration) (int64, error) {
	buf := make([]byte, 256<<10)
	r := io.LimitReader(body, max)
	var n int64
	for {
		k, rerr := r.Read(buf)
		if k > 0 {
			timer.Reset(stall)
			w, werr := out.Write(buf[:k])
			n += int64(w)
			if werr != nil {
				return n, werr
			}
			if f.Progress != nil {
				f.Progress(name, offset+n, total)
			}
		}
		if rerr == io.EOF {
			return n, nil
		}
		if rerr != nil {
			return n, rerr
		}
	}
}

// parseContentRange reads "bytes START-END/TOTAL" or "bytes */TOTAL";
// start or total is -1 where the header gives none.
func parseContentRange(s string) (start, total int64, ok bool) {
	rest, found := strings.CutPrefix(s, "bytes ")
	if !found {
		return 0, 0, false
	}
	span, size, found := strings.Cut(rest, "/")
	if !found {
		return 0, 0, false
	}
	start, total = -1, -1
	if size != "*" {
		t, err := strconv.ParseInt(size, 10, 64)
		if err != nil || t < 0 {
			return 0, 0, false
		}
		total = t
	}
	if span != "*" {
		a, _, found := strings.Cut(span, "-")
		v, err := strconv.ParseInt(a, 10, 64)
		if !found || err != nil || v < 0 {
			return 0, 0, false
		}
		start = v
	}
	return start, total, true
}
