//go:build !unix

package recorded

// mapFile reads path into memory: this system has no mapping here.
func mapFile(path string) (data []byte, unmap func([]byte) error, err error) {
	return readFile(path)
}
