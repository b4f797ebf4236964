package templates

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
)

//go:embed default
var defaultFiles embed.FS

//go:embed starter
var starterFiles embed.FS

// Default returns the default report template folder: report.md, partials/, style.css and
// config.yaml. It is read-only and compiled into the binary.
func Default() fs.FS {
	sub, err := fs.Sub(defaultFiles, "default")
	if err != nil {
		panic(err) // the directory is embedded at build time; Sub cannot fail on it
	}
	return sub
}

// Starter returns the files `caseweave template init` writes: the default template with a
// commented config.yaml and a README in place of the bare ones.
func Starter() fs.FS { return starterFS{} }

// starterFS overlays templates/starter on templates/default.
type starterFS struct{}

func (starterFS) Open(name string) (fs.File, error) {
	if f, err := starterFiles.Open(path.Join("starter", name)); err == nil {
		if st, err := f.Stat(); err == nil && !st.IsDir() {
			return f, nil
		}
		f.Close()
	}
	return Default().Open(name)
}

// starterList lists the starter's files, sorted, overlay files included once.
func starterList() ([]string, error) {
	seen := map[string]bool{}
	var names []string
	add := func(fsys fs.FS) error {
		return fs.WalkDir(fsys, ".", func(p string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() || seen[p] {
				return err
			}
			seen[p] = true
			names = append(names, p)
			return nil
		})
	}
	sub, err := fs.Sub(starterFiles, "starter")
	if err != nil {
		return nil, err
	}
	if err := add(sub); err != nil {
		return nil, err
	}
	if err := add(Default()); err != nil {
		return nil, err
	}
	return names, nil
}

// WriteStarter writes the starter template folder into dir (created if missing). It refuses to
// overwrite: if any of its files already exists, nothing is written and the error names it.
func WriteStarter(dir string) error {
	names, err := starterList()
	if err != nil {
		return err
	}
	for _, n := range names {
		target := filepath.Join(dir, filepath.FromSlash(n))
		if _, err := os.Lstat(target); err == nil {
			return fmt.Errorf("template init: %s already exists; not overwriting anything", target)
		} else if !errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("template init: %w", err)
		}
	}
	fsys := Starter()
	for _, n := range names {
		data, err := fs.ReadFile(fsys, n)
		if err != nil {
			return err
		}
		target := filepath.Join(dir, filepath.FromSlash(n))
		if err := os.MkdirAll(filepath.Dir(target), 0o755); err != nil {
			return fmt.Errorf("template init: %w", err)
		}
		// O_EXCL: a file that appeared since the check above is still not overwritten.
		f, err := os.OpenFile(target, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err != nil {
			return fmt.Errorf("template init: %w", err)
		}
		if _, err := f.Write(data); err != nil {
			f.Close()
			return fmt.Errorf("template init: %w", err)
		}
		if err := f.Close(); err != nil {
			return fmt.Errorf("template init: %w", err)
		}
	}
	return nil
}
