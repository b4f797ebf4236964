package linelist

import "unsafe"

// unsafeSameString reports whether a and b share their bytes, to check interning.
func unsafeSameString(a, b string) bool {
	return len(a) == len(b) && (len(a) == 0 || unsafe.StringData(a) == unsafe.StringData(b))
}
