// Package analysis runs caseweave's pipeline — read and validate the line list, rebuild the
// transmission forest, estimate the offspring distribution, run the branching-process and
// timing calculations — and gathers the results into one Summary, the documented structure
// that the JSON output and every report template read.
//
// Data flow one way: linelist → forest → offspring → branching / timing → Summary →
// (package render). Nothing here prints or writes files; the command line does that.
package analysis
