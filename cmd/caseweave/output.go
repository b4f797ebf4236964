package main

import (
	"encoding/json"
	"fmt"

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
