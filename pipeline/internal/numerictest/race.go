//go:build race

package numerictest

// RaceDetector is true in a build with the race detector. Coverage studies, whose loops
// the detector only slows, run in .ci/test's study step without it (SkipUnderRace).
const RaceDetector = true
