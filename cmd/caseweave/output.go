package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
)

// writeJSON writes v as indented JSON to path ("-" is stdout), atomically for a file.
func writeJSON(e env, path string, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return withCode(exitOutput, fmt.Errorf("encoding the JSON summary: %w", err))
	}
	b = append(b, '\n')
	if path == "-" {
		_, err := e.stdout.Write(b)
		return withCode(exitOutput, err)
	}
	return writeFileAtomic(path, b)
}

// writeFileAtomic writes data to a temporary file beside path, syncs it and renames it into
// place, so a failed run never leaves a half-written file and an earlier file survives.
func writeFileAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return withCode(exitOutput, fmt.Errorf("cannot write %s: %w", path, err))
	}
	name := tmp.Name()
	fail := func(err error) error {
		tmp.Close()
		os.Remove(name)
		return withCode(exitOutput, fmt.Errorf("cannot write %s: %w", path, err))
	}
	if _, err := bytes.NewReader(data).WriteTo(tmp); err != nil {
		return fail(err)
	}
	if err := tmp.Sync(); err != nil {
		return fail(err)
	}
	if err := tmp.Close(); err != nil {
		return fail(err)
	}
	if err := os.Chmod(name, 0o644); err != nil {
		return fail(err)
	}
	if err := os.Rename(name, path); err != nil {
		os.Remove(name)
		return withCode(exitOutput, fmt.Errorf("cannot write %s: %w", path, err))
	}
	return nil
}
