package readers

import (
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// Find expands files and folders into the captures to read, in a stable order: each
// folder's files sorted, each file once. Symbolic links are followed, to files and to
// folders, and a link back into a folder already being walked is not walked again. In
// folders it leaves out hidden entries, raw descriptions and entries for which leave
// returns true (a caller's own files and folders; when it gives a reason too, the entry
// is named in skipped with it); it names in skipped, with what they are, the files whose content says they are not captures and the special files (named
// pipes, devices, sockets). A path given that is not a folder is always kept, so that a
// mistake in it gets a message when it is read.
func Find(paths []string, leave func(path string, d fs.DirEntry) (bool, string)) (found, skipped []string, err error) {
	seen := map[string]bool{}
	add := func(p string) {
		a, _ := filepath.Abs(p)
		if r, err := filepath.EvalSymlinks(a); err == nil {
			a = r
		}
		if !seen[a] {
			seen[a] = true
			found = append(found, p)
		}
	}
	var walk func(dir string, inside map[string]bool) error
	walk = func(dir string, inside map[string]bool) error {
		real, err := filepath.EvalSymlinks(dir)
		if err != nil {
			return err
		}
		if inside[real] {
			skipped = append(skipped, dir+" (a link back into a folder being read)")
			return nil
		}
		inside[real] = true
		defer delete(inside, real)
		entries, err := os.ReadDir(dir)
		if err != nil {
			return err
		}
		var files, dirs []string
		for _, d := range entries {
			p := filepath.Join(dir, d.Name())
			if strings.HasPrefix(d.Name(), ".") || strings.HasSuffix(d.Name(), SidecarSuffix) {
				continue
			}
			if leave != nil {
				if out, why := leave(p, d); out {
					if why != "" {
						skipped = append(skipped, p+" ("+why+")")
					}
					continue
				}
			}
			st, err := os.Stat(p) // through a link, to what it points at
			switch {
			case err != nil:
				skipped = append(skipped, p+" (a broken link)")
			case st.IsDir():
				dirs = append(dirs, p)
			case !st.Mode().IsRegular():
				skipped = append(skipped, p+" ("+specialKind(st.Mode())+")")
			default:
				if ok, what := IsCaptureFile(p); !ok {
					skipped = append(skipped, p+" ("+what+")")
					continue
				}
				files = append(files, p)
			}
		}
		sort.Strings(files)
		for _, p := range files {
			add(p)
		}
		for _, d := range dirs {
			if err := walk(d, inside); err != nil {
				return err
			}
		}
		return nil
	}
	for _, root := range paths {
		if st, err := os.Stat(root); err != nil || !st.IsDir() {
			add(root)
			continue
		}
		if err := walk(root, map[string]bool{}); err != nil {
			return nil, nil, err
		}
	}
	return found, skipped, nil
}

// Beside returns the nearest file called name in path's folder or the folders above it,
// no higher than root (a folder given on the command line; for a file given itself, its
// own folder), or "" when there is none: the setup file that belongs to a capture.
func Beside(path, root, name string) string {
	dir, _ := filepath.Abs(filepath.Dir(path))
	top, _ := filepath.Abs(root)
	if st, err := os.Stat(root); err != nil || !st.IsDir() {
		top = dir
	}
	for {
		if st, err := os.Stat(filepath.Join(dir, name)); err == nil && st.Mode().IsRegular() {
			return filepath.Join(dir, name)
		}
		if dir == top || !strings.HasPrefix(dir, top+string(filepath.Separator)) {
			return ""
		}
		dir = filepath.Dir(dir)
	}
}

// BesideAll groups paths by the file called name that belongs to each (Beside), each
// path's root being the longest of roots that holds it: the map's keys are those files
// ("" for paths with none).
func BesideAll(paths, roots []string, name string) map[string][]string {
	out := map[string][]string{}
	for _, p := range paths {
		ap, _ := filepath.Abs(p)
		root, best := p, ""
		for _, r := range roots {
			if ar, _ := filepath.Abs(r); strings.HasPrefix(ap, ar+string(filepath.Separator)) && len(ar) > len(best) {
				root, best = r, ar
			}
		}
		s := Beside(p, root, name)
		out[s] = append(out[s], p)
	}
	return out
}

// OneBeside is the file called name that belongs to all of paths (see BesideAll), ""
// when none has one; paths that belong to different ones (or some to none) are an
// error that says which uses which.
func OneBeside(paths, roots []string, name string) (string, error) {
	groups := BesideAll(paths, roots, name)
	if len(groups) <= 1 {
		for p := range groups {
			return p, nil
		}
		return "", nil
	}
	var which []string
	for p, used := range groups {
		if p == "" {
			p = "no " + name
		}
		which = append(which, fmt.Sprintf("%s uses %s", used[0], p))
	}
	sort.Strings(which)
	return "", fmt.Errorf("the captures belong to different %s files (%s)", name, strings.Join(which, "; "))
}
