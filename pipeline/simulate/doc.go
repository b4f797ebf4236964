// Package simulate draws line lists from a Bienaymé–Galton–Watson branching process with
// negative-binomial offspring (each case's individual reproductive number ν ~ Gamma(k, mean
// R), its offspring count Z | ν ~ Poisson(ν) [Lloyd-Smith et al. 2005]) and a gamma serial
// interval in whole days. It feeds the demo, the tests and scenario planning.
//
// A simulated line list is observed the way a real one is: cases whose onset falls after the
// observation date are not in it, so recent cases have incomplete offspring counts, and an
// optional share of infector links can be blanked to mimic incomplete contact tracing. Every
// name it writes (places, settings) comes from the Scenario; nothing is a real person.
package simulate
