// Package output writes caseweave's files so that a reader never sees half of one: each file
// goes to a temporary file beside its destination, is synced, and is renamed into place.
package output

import (
	"fmt"
	"os"
	"path/filepath"
)

// WriteFile writes data to path so that readers see either the old file or the new one,
// never a part: it writes a temporary file in the same directory, syncs it, and renames it
// over path. On any failure the previous file is left untouched and the temporary removed.
func WriteFile(path string, data []byte) (err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	name := tmp.Name()
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(name)
		}
	}()
	if _, err = tmp.Write(data); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Chmod(0o644); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = os.Rename(name, path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	// Sync the directory so the rename itself survives a crash (best effort: not every
	// platform can open a directory for syncing).
	if d, derr := os.Open(dir); derr == nil {
		_ = d.Sync()
		d.Close()
	}
	return nil
}
