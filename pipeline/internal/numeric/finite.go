package numeric

import "math"

// IsFinite reports whether x is neither NaN nor ±Inf.
func IsFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// FinitePtr returns a pointer to a copy of x, or nil when x is NaN or ±Inf: the pipeline's
// nullable numbers, which JSON and charts can carry.
func FinitePtr(x float64) *float64 {
	if !IsFinite(x) {
		return nil
	}
	return &x
}
