package recorded

import (
	"fmt"
	"os"
)

// readFile is the fallback of mapFile: the file read into memory.
func readFile(path string) ([]byte, func([]byte) error, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, fmt.Errorf("recorded: %w", err)
	}
	return data, nil, nil
}
