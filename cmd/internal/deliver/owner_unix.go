//go:build unix

package deliver

import (
	"fmt"
	"io/fs"
	"os"
	"syscall"
)

// ownedByMe checks that the file belongs to the user running the program.
func ownedByMe(st fs.FileInfo) error {
	sys, ok := st.Sys().(*syscall.Stat_t)
	if !ok {
		return nil
	}
	if int(sys.Uid) != os.Getuid() {
		return fmt.Errorf("it belongs to user %d, not to the user running caseweave (%d)", sys.Uid, os.Getuid())
	}
	return nil
}
