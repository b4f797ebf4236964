package output

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
)

// swapDir puts the staged folder in place of dir and leaves dir's old content at staged, to
// be removed once the whole transaction has committed; back undoes it. Where the system can
// exchange two names atomically (exchange), a reader sees either folder, never neither;
// elsewhere there is a moment between two renames when dir is absent.
func swapDir(staged, dir string) (back func(), err error) {
	if _, err := os.Lstat(dir); errors.Is(err, fs.ErrNotExist) {
		if err := os.Rename(staged, dir); err != nil {
			return nil, err
		}
		syncDir(filepath.Dir(dir))
		return func() { os.Rename(dir, staged) }, nil
	}
	if err := exchange(staged, dir); err == nil {
		syncDir(filepath.Dir(dir))
		return func() { exchange(staged, dir) }, nil
	}
	swap := func() error {
		old := filepath.Join(filepath.Dir(dir), "."+filepath.Base(dir)+stagePrefix+strconv.Itoa(os.Getpid())+"-old")
		if err := os.Rename(dir, old); err != nil {
			return err
		}
		if err := os.Rename(staged, dir); err != nil {
			os.Rename(old, dir)
			return err
		}
		return os.Rename(old, staged)
	}
	if err := swap(); err != nil {
		return nil, err
	}
	syncDir(filepath.Dir(dir))
	return func() { swap() }, nil
}
