// Command profile runs the whole `caseweave report` pipeline on one line list with the
// command's default settings (read, link, analyse, release, render the default
// template) under runtime/pprof, and prints the time of each stage. It is the profile
// behind BENCHMARKS.md:
//
//	go run ./cmd/profile -as-of 2027-07-01 -cpuprofile cpu.pprof big.csv
//	go tool pprof -top -cum cpu.pprof
//
// With -by-jurisdiction it then analyses and renders each jurisdiction on its own, as
// `report --by jurisdiction` does. The analysis is analysis.Run as the report command calls it; -skip-chain-bootstrap is
// not offered on purpose, so the profile shows what a user waits for.
package main

import (
	"flag"
	"fmt"
	"os"
	"runtime"
	"runtime/pprof"
	"sort"
	"time"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
)

func main() {
	asOf := flag.String("as-of", "", "analysis date YYYY-MM-DD (required)")
	cpu := flag.String("cpuprofile", "", "write a CPU profile to FILE")
	mem := flag.String("memprofile", "", "write a heap profile (after the render) to FILE")
	replicates := flag.Int("bootstrap", analysis.DefaultReplicates, "bootstrap replicates")
	out := flag.String("o", "", "write the HTML report to FILE")
	byJur := flag.Bool("by-jurisdiction", false, "also analyse and render each jurisdiction on its own, as report --by jurisdiction does")
	flag.Parse()
	if flag.NArg() != 1 || *asOf == "" {
		fmt.Fprintln(os.Stderr, "usage: profile -as-of YYYY-MM-DD [-cpuprofile FILE] [-memprofile FILE] LINELIST.csv")
		os.Exit(2)
	}
	day, err := linelist.ParseISODay(*asOf)
	if err != nil {
		fail(err)
	}
	if *cpu != "" {
		f, err := os.Create(*cpu)
		if err != nil {
			fail(err)
		}
		if err := pprof.StartCPUProfile(f); err != nil {
			fail(err)
		}
		defer pprof.StopCPUProfile()
	}
	path := flag.Arg(0)
	total := time.Now()
	t := time.Now()
	stage := func(name string) {
		fmt.Printf("%-12s %8.3f s\n", name, time.Since(t).Seconds())
		t = time.Now()
	}
	ll, err := linelist.ReadFile(path, linelist.Options{AsOf: day})
	if err != nil {
		fail(err)
	}
	stage("read")
	f := forest.BuildIndexed(ll.Cases, ll.ByID)
	stage("forest")
	s, err := analysis.Run(path, ll, f, analysis.Options{AsOf: day, Replicates: *replicates, Seed: 1})
	if err != nil {
		fail(err)
	}
	stage("analysis")
	rel, err := analysis.Release(s, analysis.Policy{Pseudonyms: analysis.NewPseudonyms("")})
	if err != nil {
		fail(err)
	}
	stage("release")
	html, err := render.Render(rel, render.Options{})
	if err != nil {
		fail(err)
	}
	stage("render")
	if *byJur {
		var values []string
		seen := map[string]bool{}
		for i := range ll.Cases {
			if v := ll.Cases[i].Jurisdiction; !seen[v] {
				seen[v] = true
				values = append(values, v)
			}
		}
		sort.Strings(values)
		for _, v := range values {
			sel := func(c *linelist.Case) bool { return c.Jurisdiction == v }
			s, err := analysis.Run(path, ll, f, analysis.Options{AsOf: day, Replicates: *replicates, Seed: 1, Select: sel})
			if err != nil {
				fail(err)
			}
			rel, err := analysis.Release(s, analysis.Policy{Pseudonyms: analysis.NewPseudonyms("")})
			if err != nil {
				fail(err)
			}
			if _, err := render.Render(rel, render.Options{}); err != nil {
				fail(err)
			}
			stage("jurisdiction " + v)
		}
	}
	fmt.Printf("%-12s %8.3f s  rows %d  clusters %d  html %d bytes\n", "total", time.Since(total).Seconds(), ll.Rows, len(f.Clusters), len(html))
	if *out != "" {
		if err := os.WriteFile(*out, html, 0o644); err != nil {
			fail(err)
		}
	}
	if *mem != "" {
		runtime.GC()
		mf, err := os.Create(*mem)
		if err != nil {
			fail(err)
		}
		if err := pprof.WriteHeapProfile(mf); err != nil {
			fail(err)
		}
		mf.Close()
	}
	runtime.KeepAlive(ll)
	runtime.KeepAlive(f)
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "profile:", err)
	os.Exit(1)
}
