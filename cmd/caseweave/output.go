package main

import (
	"encoding/json"
	"fmt"

	"github.com/caseweave/caseweave/render"
)

// writeJSON writes v as indented JSON to path ("-" is stdout), atomically for a file.
func writeJSON(e env, path string, v any) error {
	b, err := jsonIndent(v)
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

// writeFileAtomic writes through render.WriteFileAtomic (temporary file, sync, rename), so
// a failed run never leaves a half-written file and an earlier file survives.
func writeFileAtomic(path string, data []byte) error {
	return withCode(exitOutput, render.WriteFileAtomic(path, data))
}

func jsonIndent(v any) ([]byte, error) { return json.MarshalIndent(v, "", "  ") }
