package output

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
)

// ErrInterrupted is returned when the context was cancelled (a signal) while a transaction
// was being staged: nothing was changed and what was staged is removed.
var ErrInterrupted = errors.New("interrupted: nothing was changed")

// Manifest is the file that marks a folder as a batch written by caseweave, listing its
// files; only such a folder (or an empty one) is replaced by a later batch.
const Manifest = ".caseweave-batch"

// stagePrefix starts the name of every staged file or folder: ".<target>.caseweave-<pid>-…",
// so that a later run can find those of a killed run and remove them.
const stagePrefix = ".caseweave-"

// Transaction writes a run's outputs — whole folders (a batch of reports) and single files —
// so that each destination shows either all of its old content or all of its new: every file
// is first written beside its destination and synced, and only when everything is staged are
// the destinations swapped in by renames (a folder by an atomic exchange where the system
// has one). A failure or an interruption before the swap removes what was staged and leaves
// every destination as it was; a failure during the swap puts back the folders already
// swapped.
type Transaction struct {
	folders []*Folder
	files   []stagedFile
	// Fault, when set, is called before each write and rename with its number (from 1); an
	// error it returns fails that step. Tests use it to fail or interrupt the n-th step.
	Fault func(step int) error
	step  int
}

// Folder is a destination folder replaced as a whole, with the files of its new content.
type Folder struct {
	Dir string
	// Private makes the folder readable by its owner only (case-level data).
	Private bool
	names   []string
	data    map[string][]byte
}

type stagedFile struct {
	path string
	data []byte
	tmp  string
}

// Folder adds a destination folder to the transaction.
func (t *Transaction) Folder(dir string) *Folder {
	f := &Folder{Dir: dir, data: map[string][]byte{}}
	t.folders = append(t.folders, f)
	return f
}

// Add puts a file (a slash-separated path inside the folder) in the folder's new content.
func (f *Folder) Add(name string, data []byte) {
	if _, ok := f.data[name]; !ok {
		f.names = append(f.names, name)
	}
	f.data[name] = data
}

// File adds a single destination file.
func (t *Transaction) File(path string, data []byte) {
	t.files = append(t.files, stagedFile{path: path, data: data})
}

// Paths lists every destination the transaction would write: each file, and each folder's
// files inside it.
func (t *Transaction) Paths() []string {
	var out []string
	for _, f := range t.files {
		out = append(out, f.path)
	}
	for _, f := range t.folders {
		for _, n := range f.names {
			out = append(out, filepath.Join(f.Dir, filepath.FromSlash(n)))
		}
	}
	return out
}

func (t *Transaction) next() error {
	t.step++
	if t.Fault != nil {
		return t.Fault(t.step)
	}
	return nil
}

// Commit stages everything, checking ctx between writes, then swaps it in.
func (t *Transaction) Commit(ctx context.Context) (err error) {
	for _, f := range t.folders {
		if err := checkReplaceable(f.Dir); err != nil {
			return err
		}
		removeStale(filepath.Dir(f.Dir), filepath.Base(f.Dir))
	}
	for _, f := range t.files {
		removeStale(filepath.Dir(f.path), filepath.Base(f.path))
	}
	var staged []string // staging folders, removed on failure
	defer func() {
		if err != nil {
			for _, s := range staged {
				os.RemoveAll(s)
			}
			for _, f := range t.files {
				if f.tmp != "" {
					os.Remove(f.tmp)
				}
			}
		}
	}()
	stage := make([]string, len(t.folders))
	for i, f := range t.folders {
		parent := filepath.Dir(f.Dir)
		if err := os.MkdirAll(parent, 0o755); err != nil {
			return fmt.Errorf("cannot create %s: %w", parent, err)
		}
		dir, err := os.MkdirTemp(parent, stageName(filepath.Base(f.Dir)))
		if err != nil {
			return fmt.Errorf("cannot stage %s: %w", f.Dir, err)
		}
		staged = append(staged, dir)
		stage[i] = dir
		mode := os.FileMode(0o755)
		if f.Private {
			mode = 0o700
		}
		if err := os.Chmod(dir, mode); err != nil {
			return fmt.Errorf("cannot stage %s: %w", f.Dir, err)
		}
		names := append([]string(nil), f.names...)
		for _, n := range names {
			if err := interrupted(ctx); err != nil {
				return err
			}
			if err := t.next(); err != nil {
				return fmt.Errorf("write %s: %w", filepath.Join(f.Dir, n), err)
			}
			if err := writeSynced(filepath.Join(dir, filepath.FromSlash(n)), f.data[n]); err != nil {
				return fmt.Errorf("write %s: %w", filepath.Join(f.Dir, n), err)
			}
		}
		sort.Strings(names)
		if err := writeSynced(filepath.Join(dir, Manifest), []byte(strings.Join(names, "\n")+"\n")); err != nil {
			return fmt.Errorf("write %s: %w", f.Dir, err)
		}
		if err := syncTree(dir); err != nil {
			return fmt.Errorf("write %s: %w", f.Dir, err)
		}
	}
	for i := range t.files {
		f := &t.files[i]
		if err := interrupted(ctx); err != nil {
			return err
		}
		if err := t.next(); err != nil {
			return fmt.Errorf("write %s: %w", f.path, err)
		}
		tmp, err := stageFile(f.path, f.data)
		if err != nil {
			return fmt.Errorf("write %s: %w", f.path, err)
		}
		f.tmp = tmp
	}
	if err := interrupted(ctx); err != nil {
		return err
	}
	// Everything is staged: swap. A folder swapped is exchanged back if a later swap fails.
	var done []func()
	for i, f := range t.folders {
		if err := t.next(); err != nil {
			undo(done)
			return fmt.Errorf("replace %s: %w", f.Dir, err)
		}
		back, err := swapDir(stage[i], f.Dir)
		if err != nil {
			undo(done)
			return fmt.Errorf("replace %s: %w", f.Dir, err)
		}
		done = append(done, back)
	}
	for i := range t.files {
		f := &t.files[i]
		if err := t.next(); err != nil {
			undo(done)
			return fmt.Errorf("write %s: %w", f.path, err)
		}
		if err := os.Rename(f.tmp, f.path); err != nil {
			undo(done)
			return fmt.Errorf("write %s: %w", f.path, err)
		}
		f.tmp = ""
		syncDir(filepath.Dir(f.path))
	}
	// Committed: the old content of each folder is in its staging place; remove it.
	for _, s := range stage {
		os.RemoveAll(s)
	}
	staged = nil
	return nil
}

func undo(done []func()) {
	for i := len(done) - 1; i >= 0; i-- {
		done[i]()
	}
}

func interrupted(ctx context.Context) error {
	if ctx.Err() != nil {
		return ErrInterrupted
	}
	return nil
}

// stageName is the pattern of a staged copy of target: ".<target>.caseweave-<pid>-*".
func stageName(target string) string {
	return "." + target + stagePrefix + strconv.Itoa(os.Getpid()) + "-*"
}

// removeStale removes the staged copies of target left by runs that were killed (their
// process is gone); those of a run still going are left alone.
func removeStale(dir, target string) {
	matches, _ := filepath.Glob(filepath.Join(dir, "."+globEscape(target)+stagePrefix+"*"))
	for _, m := range matches {
		rest := strings.TrimPrefix(filepath.Base(m), "."+target+stagePrefix)
		pid, err := strconv.Atoi(strings.SplitN(rest, "-", 2)[0])
		if err != nil || alive(pid) {
			continue
		}
		os.RemoveAll(m)
	}
}

func globEscape(s string) string {
	r := strings.NewReplacer(`*`, `\*`, `?`, `\?`, `[`, `\[`, `\`, `\\`)
	return r.Replace(s)
}

// alive reports whether a process with that id exists.
func alive(pid int) bool {
	if pid == os.Getpid() {
		return true
	}
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	err = p.Signal(syscall.Signal(0))
	return err == nil || errors.Is(err, syscall.EPERM)
}

// checkReplaceable refuses to replace a folder that caseweave did not write: one that is
// neither absent, empty, a batch with a manifest, nor holding only report files (.html,
// .json, .pdf, .csv) and folders of them, as a batch without a manifest does.
func checkReplaceable(dir string) error {
	st, err := os.Stat(dir)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("cannot use %s: %w", dir, err)
	}
	if !st.IsDir() {
		return &RefusedError{Path: dir, Why: "it is a file, not a folder"}
	}
	if _, err := os.Stat(filepath.Join(dir, Manifest)); err == nil {
		return nil
	}
	var foreign string
	_ = filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || foreign != "" || p == dir {
			return err
		}
		if d.IsDir() {
			return nil
		}
		switch strings.ToLower(filepath.Ext(p)) {
		case ".html", ".json", ".pdf", ".csv":
			return nil
		}
		foreign = p
		return filepath.SkipAll
	})
	if foreign != "" {
		return &RefusedError{Path: dir, Why: fmt.Sprintf("it holds %s, which caseweave did not write, and a batch replaces its folder as a whole", foreign)}
	}
	return nil
}

// RefusedError is an output caseweave will not write over.
type RefusedError struct {
	Path, Why string
}

func (e *RefusedError) Error() string {
	return fmt.Sprintf("will not write %s: %s; choose a new or empty folder", e.Path, e.Why)
}

func writeSynced(path string, data []byte) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// stageFile writes data to a staged copy beside path and returns its name.
func stageFile(path string, data []byte) (string, error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, stageName(filepath.Base(path)))
	if err != nil {
		return "", err
	}
	name := tmp.Name()
	err = func() error {
		if _, err := tmp.Write(data); err != nil {
			return err
		}
		if err := tmp.Chmod(0o644); err != nil {
			return err
		}
		return tmp.Sync()
	}()
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(name)
		return "", err
	}
	return name, nil
}

// syncTree syncs every folder under dir and dir itself, so the staged files' names are on
// disk before the swap.
func syncTree(dir string) error {
	return filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err == nil && d.IsDir() {
			syncDir(p)
		}
		return err
	})
}

// syncDir syncs a directory (best effort: not every platform can open one for syncing).
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		_ = d.Sync()
		d.Close()
	}
}

// Folders lists the destination folders.
func (t *Transaction) Folders() []string {
	var out []string
	for _, f := range t.folders {
		out = append(out, f.Dir)
	}
	return out
}
