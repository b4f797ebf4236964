package templates_test

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/caseweave/caseweave/templates"
)

func ExampleWriteStarter() {
	dir, _ := os.MkdirTemp("", "caseweave-starter-")
	defer os.RemoveAll(dir)
	fmt.Println(templates.WriteStarter(filepath.Join(dir, "north")))
	_, err := os.Stat(filepath.Join(dir, "north", "report.md"))
	fmt.Println(err == nil)
	// Output:
	// <nil>
	// true
}
