//go:build !race

package numerictest

// RaceDetector is true in a build with the race detector.
const RaceDetector = false
