package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"sync/atomic"
	"syscall"

	"github.com/caseweave/caseweave/cmd/internal/output"
)

// writeJSON writes v as indented JSON to path ("-" is stdout), atomically for a file.
func writeJSON(e env, path string, v any) error {
	b, err := jsonIndent(v)
	if err != nil {
		return withCode(exitOutput, fmt.Errorf("encoding the JSON summary: %w", err))
	}
	return writeOut(e, path, append(b, '\n'))
}

// writeOut writes data to path ("-" is stdout, "" nothing), atomically for a file.
func writeOut(e env, path string, data []byte) error {
	switch path {
	case "":
		return nil
	case "-":
		_, err := e.stdout.Write(data)
		return withCode(exitOutput, err)
	}
	return writeFileAtomic(path, data)
}

// writeFileAtomic writes through output.WriteFile (temporary file, sync, rename), so
// a failed run never leaves a half-written file and an earlier file survives.
func writeFileAtomic(path string, data []byte) error {
	return withCode(exitOutput, output.WriteFile(path, data))
}

func jsonIndent(v any) ([]byte, error) { return json.MarshalIndent(v, "", "  ") }

// commit writes a transaction, stopping cleanly on SIGINT or SIGTERM while it stages (what
// it staged is removed and earlier output stays as it was). The exit code of an interruption
// is the shell's: 130 for SIGINT, 143 for SIGTERM.
func commit(e env, tx *output.Transaction) error {
	tx.Fault = e.writeFault
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	defer signal.Stop(sigs)
	var got atomic.Value
	go func() {
		select {
		case s := <-sigs:
			got.Store(s)
			cancel()
		case <-ctx.Done():
		}
	}()
	err := tx.Commit(ctx)
	var re *output.RefusedError
	switch {
	case err == nil:
		return nil
	case errors.Is(err, output.ErrInterrupted):
		code := exitInterrupt
		if s, _ := got.Load().(os.Signal); s == syscall.SIGTERM {
			code = exitTerminated
		}
		return &exitError{code, err}
	case errors.As(err, &re):
		return &exitError{exitUsage, err}
	}
	return withCode(exitOutput, err)
}

// refuseOverwrites fails, as a usage error naming both, when an output would replace an
// input, when two outputs are the same file, or when an input lies inside an output folder
// (which a batch replaces as a whole). Paths are compared after resolving links.
func refuseOverwrites(tx *output.Transaction, inputs []string) error {
	canon := func(p string) string {
		abs, err := filepath.Abs(p)
		if err != nil {
			return p
		}
		if r, err := filepath.EvalSymlinks(abs); err == nil {
			return r
		}
		if d, err := filepath.EvalSymlinks(filepath.Dir(abs)); err == nil {
			return filepath.Join(d, filepath.Base(abs))
		}
		return abs
	}
	seen := map[string]string{}
	for _, in := range inputs {
		seen[canon(in)] = "input " + in
	}
	for _, out := range tx.Paths() {
		c := canon(out)
		if other, ok := seen[c]; ok {
			return usageErrorf("the output %s would replace %s; choose another name", out, other)
		}
		seen[c] = "output " + out
	}
	for _, dir := range tx.Folders() {
		d := canon(dir) + string(filepath.Separator)
		for _, in := range inputs {
			if strings.HasPrefix(canon(in), d) {
				return usageErrorf("the input %s lies inside the output folder %s, which a batch replaces as a whole; choose another folder", in, dir)
			}
		}
	}
	return nil
}
