package readers

import (
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// Find expands files and folders into the captures to read, in a stable order: each
// folder's files sorted, each path once. In folders it leaves out hidden entries, raw
// descriptions, entries for which leave returns true (a caller's own files and
// folders), and files whose content says they are not captures; those it names in
// skipped, with what they are. A path given that is not a folder is always kept, so
// that a mistake in it gets a message when it is read.
func Find(paths []string, leave func(path string, d fs.DirEntry) bool) (found, skipped []string, err error) {
	seen := map[string]bool{}
	add := func(p string) {
		if a, _ := filepath.Abs(p); !seen[a] {
			seen[a] = true
			found = append(found, p)
		}
	}
	for _, root := range paths {
		if st, err := os.Stat(root); err != nil || !st.IsDir() {
			add(root)
			continue
		}
		var here []string
		err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
			if err != nil || p == root {
				return nil
			}
			if b := d.Name(); strings.HasPrefix(b, ".") || strings.HasSuffix(b, SidecarSuffix) || (leave != nil && leave(p, d)) {
				if d.IsDir() {
					return filepath.SkipDir
				}
				return nil
			}
			if d.IsDir() || !d.Type().IsRegular() {
				return nil
			}
			if ok, what := IsCaptureFile(p); !ok {
				skipped = append(skipped, p+" ("+what+")")
				return nil
			}
			here = append(here, p)
			return nil
		})
		if err != nil {
			return nil, nil, err
		}
		sort.Strings(here)
		for _, p := range here {
			add(p)
		}
	}
	return found, skipped, nil
}
