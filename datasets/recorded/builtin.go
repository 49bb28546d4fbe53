package recorded

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
	"strings"
)

// The mappings shipped with estbench for public datasets, one TOML file
// each, named after the dataset sample they read.
//
//go:embed mappings/*.toml
var shipped embed.FS

// ShippedMapping returns the mapping shipped for the dataset sample name
// ("broad-imu-mocap"). The error lists the names there are.
func ShippedMapping(name string) (*Mapping, error) {
	data, err := shipped.ReadFile("mappings/" + name + ".toml")
	if err != nil {
		return nil, fmt.Errorf("recorded: no shipped mapping %q: there are %s", name, strings.Join(ShippedMappings(), ", "))
	}
	return ParseMapping(name+".toml", data)
}

// ShippedMappings lists the names of the shipped mappings, sorted.
func ShippedMappings() []string {
	ents, _ := fs.ReadDir(shipped, "mappings")
	var out []string
	for _, e := range ents {
		if n, ok := strings.CutSuffix(e.Name(), ".toml"); ok {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return out
}
