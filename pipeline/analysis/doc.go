// Package analysis runs caseweave's pipeline — read and validate the line list, rebuild the
// transmission forest, estimate the offspring distribution, run the branching-process and
// timing calculations — and gathers the results into one Summary, the documented structure
// that the JSON output and every report template read.
//
// Data flow one way: linelist → forest → offspring → branching / timing → Summary →
// Release → (package render). Nothing here prints or writes files; the command line does.
//
// The Summary of Run is the analyst's: exact counts, case identifiers, exact dates. Release
// makes from it, under a disclosure Policy, the Released view that every output for
// stakeholders is built from (release.go), and CheckDisclosure audits a released view
// against the full one (disclosure.go).
package analysis
