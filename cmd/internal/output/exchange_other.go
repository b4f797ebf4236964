//go:build !linux

package output

import "errors"

// exchange is unavailable here; swapDir renames twice instead.
func exchange(a, b string) error { return errors.New("no atomic exchange on this system") }
