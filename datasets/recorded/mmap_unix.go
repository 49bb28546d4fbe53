//go:build unix

package recorded

import (
	"fmt"
	"os"
	"syscall"
)

// mapFile maps path privately into memory; where mapping fails it reads
// the file (unmap is then nil).
func mapFile(path string) (data []byte, unmap func([]byte) error, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("recorded: %w", err)
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		return nil, nil, fmt.Errorf("recorded: %w", err)
	}
	size := fi.Size()
	if size == 0 || !fi.Mode().IsRegular() || int64(int(size)) != size {
		return readFile(path)
	}
	data, err = syscall.Mmap(int(f.Fd()), 0, int(size), syscall.PROT_READ|syscall.PROT_WRITE, syscall.MAP_PRIVATE)
	if err != nil {
		return readFile(path)
	}
	return data, syscall.Munmap, nil
}
