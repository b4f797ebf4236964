package output

import "golang.org/x/sys/unix"

// exchange swaps two existing paths atomically (renameat2 with RENAME_EXCHANGE, Linux 3.15
// and later); it fails on file systems that do not support it.
func exchange(a, b string) error {
	return unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_EXCHANGE)
}
