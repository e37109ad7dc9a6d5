// Command decodeonly is the benchmark baseline: it reads the same files as scangate and
// only decodes them with the same YAML library into generic values. scangate's cost is
// compared with this, the least any checker of these files must pay.
package main

import (
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"go.yaml.in/yaml/v3"
)

func main() {
	n := 0
	for _, root := range os.Args[1:] {
		err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() || !strings.HasSuffix(path, ".yaml") {
				return err
			}
			data, err := os.ReadFile(path)
			if err != nil {
				return err
			}
			var v any
			if err := yaml.Unmarshal(data, &v); err != nil {
				return fmt.Errorf("%s: %v", path, err)
			}
			n++
			return nil
		})
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(2)
		}
	}
	fmt.Printf("decoded %d files\n", n)
}
