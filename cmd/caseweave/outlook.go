package main

import (
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

func newOutlookCmd(e env) *cobra.Command {
	var (
		model       string
		R, k        float64
		pmf         string
		normalize   bool
		active      int
		generations int
		share       float64
		jsonOut     string
		control     bool
	)
	c := &cobra.Command{
		Use:   "outlook (--model poisson|geometric|negbin --R x [--k x] | --pmf p0,p1,... [--normalize]) [flags]",
		Short: "Branching-process outlook of an offspring distribution: extinction, generations, chains",
		Long: `outlook takes an offspring distribution — a model with its parameters, or a list of
probabilities P(Z=0), P(Z=1), ... — and works out the extinction probability, the distribution
of the next generations' sizes from --active cases, the chain-size distribution, the share of
cases responsible for --share of transmission, and the superspreading threshold.

--control adds what control would do (Lloyd-Smith et al. 2005): for efforts from 0 to 1, the
reproduction number and the chance that one introduction dies out when everyone's transmission
is cut by that share, when that share of cases is stopped at random, and when the most
infectious share of cases is stopped (models with a gamma or fixed individual R only), with
the effort that brings R below 1 under each.`,
		Args: exactArgs(0, "no positional arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			d, err := outlookDistribution(c, model, R, k, pmf, normalize)
			if err != nil {
				return err
			}
			if active < 0 {
				return usageErrorf("--active must be 0 or more, got %d", active)
			}
			if generations < 1 || generations > 100 {
				return usageErrorf("--generations must be between 1 and 100, got %d", generations)
			}
			if !(share > 0 && share < 1) {
				return usageErrorf("--share must be between 0 and 1, got %v", share)
			}
			res, err := branching.Outlook(d, active, generations, share)
			if err != nil {
				return withCode(exitInput, err)
			}
			text := e.stdout
			if jsonOut == "-" {
				text = e.stderr // standard output carries the JSON alone
			}
			printOutlook(text, res)
			doc := newOutlookJSON(res)
			if control {
				if doc.Control, err = outlookControl(d); err != nil {
					return withCode(exitInput, err)
				}
				printControl(text, doc.Control)
			}
			if jsonOut != "" {
				return writeJSON(e, jsonOut, doc)
			}
			return nil
		},
	}
	f := c.Flags()
	f.StringVar(&model, "model", "", "offspring model: poisson, geometric or negbin")
	f.Float64Var(&R, "R", 0, "mean offspring count R")
	f.Float64Var(&k, "k", 0, "dispersion k (negbin only)")
	f.StringVar(&pmf, "pmf", "", "offspring probabilities P(Z=0),P(Z=1),... instead of a model")
	f.BoolVar(&normalize, "normalize", false, "rescale a --pmf list that does not sum to 1")
	f.IntVar(&active, "active", 1, "cases able to transmit now")
	f.IntVar(&generations, "generations", 5, "generations to decode")
	f.Float64Var(&share, "share", 0.8, "target share of transmission for the concentration measure")
	f.StringVar(&jsonOut, "json", "", "write the outlook as JSON to FILE (- for stdout)")
	f.BoolVar(&control, "control", false, "add the control scenarios: population-wide, random and targeted")
	return c
}

func outlookDistribution(c *cobra.Command, model string, R, k float64, pmf string, normalize bool) (offspring.Distribution, error) {
	if (model == "") == (pmf == "") {
		return nil, usageErrorf("give either --model with --R (and --k for negbin) or --pmf")
	}
	if pmf != "" {
		var ps []float64
		for _, f := range strings.Split(pmf, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil {
				return nil, usageErrorf("--pmf: %q is not a number", f)
			}
			ps = append(ps, v)
		}
		d, err := offspring.NewEmpirical(ps, normalize)
		if err != nil {
			return nil, usageErrorf("--pmf: %v", err)
		}
		return d, nil
	}
	if !c.Flags().Changed("R") {
		return nil, usageErrorf("--model %s needs --R", model)
	}
	if !(R >= 0) || R > 1000 {
		return nil, usageErrorf("--R must be between 0 and 1000, got %v", R)
	}
	switch model {
	case "poisson":
		return offspring.Poisson{R: R}, nil
	case "geometric":
		return offspring.Geometric{R: R}, nil
	case "negbin", "negative_binomial":
		if !c.Flags().Changed("k") || !(k > 0) || k > 1e10 {
			return nil, usageErrorf("--model negbin needs a positive --k (the dispersion), got %v", k)
		}
		return offspring.NegBin{R: R, K: k}, nil
	}
	return nil, usageErrorf("--model must be poisson, geometric or negbin, got %q", model)
}

func printOutlook(w io.Writer, r *branching.OutlookResult) {
	fmt.Fprintf(w, "Offspring model   %s, mean %.4g\n", r.Distribution.Name(), r.Distribution.Mean())
	fmt.Fprintf(w, "Extinction        %.6f  (probability one introduction dies out)\n", r.ExtinctionProbability)
	fmt.Fprintf(w, "Major outbreak    %.6f\n", r.MajorOutbreakProbability)
	if r.ShareByNu != nil {
		fmt.Fprintf(w, "Share causing %g%% of transmission (by individual R)   %.4f\n", 100*r.ShareTarget, *r.ShareByNu)
	}
	if r.ShareByOffspring != nil {
		fmt.Fprintf(w, "Share causing %g%% of transmission (by offspring count) %.4f\n", 100*r.ShareTarget, *r.ShareByOffspring)
	}
	fmt.Fprintf(w, "Superspreading threshold  more than %d offspring (99th percentile of Poisson(R))\n\n", r.SSEThreshold)
	fmt.Fprintf(w, "  %-10s %10s %12s %12s %12s\n", "generation", "P(none)", "mean", "variance", "beyond table")
	for _, g := range r.Generations {
		fmt.Fprintf(w, "  %-10d %10.6f %12s %12s %12.2g\n", g.N, g.PZero, fmtG(g.Mean), fmtG(g.Variance), g.TruncatedMass)
	}
	cs := r.ChainSize
	fmt.Fprintf(w, "\nChain size from one case:")
	if cs.Mean != nil {
		fmt.Fprintf(w, " mean %.4g;", *cs.Mean)
	}
	for y, p := range cs.PMF {
		if y == 5 {
			break
		}
		fmt.Fprintf(w, " P(%d)=%.4f", y+1, p)
	}
	fmt.Fprintln(w)
}

func fmtG(p *float64) string {
	if p == nil {
		return "–"
	}
	return strconv.FormatFloat(*p, 'g', 4, 64)
}

// outlookJSON is the document `outlook --json` writes.
type outlookJSON struct {
	Model struct {
		Name string  `json:"name"`
		R    float64 `json:"R"`
		// K is the dispersion of a gamma-distributed ν (the negative binomial's k, 1 for the
		// geometric), null for other models.
		K *float64 `json:"k"`
	} `json:"model"`
	Mean                     float64 `json:"mean"`
	ExtinctionProbability    float64 `json:"extinction_probability"`
	MajorOutbreakProbability float64 `json:"major_outbreak_probability"`
	// The share fields keep their "80pct" names whatever ShareTarget is.
	ShareTarget      float64                 `json:"share_target"`
	ShareByNu        *float64                `json:"share_causing_80pct"`
	ShareByOffspring *float64                `json:"share_causing_80pct_offspring"`
	SSEThreshold     int                     `json:"sse_threshold"`
	Generations      []outlookGenerationJSON `json:"generations"`
	ChainSize        struct {
		// PMF[i] = P(Y = i + 1).
		PMF  []float64 `json:"pmf"`
		Mean *float64  `json:"mean"`
		// TruncatedMass = q − Σ PMF (finite chains longer than the list).
		TruncatedMass float64 `json:"truncated_mass"`
	} `json:"chain_size"`
	// Control is present with --control.
	Control []outlookControlJSON `json:"control,omitempty"`
}

// outlookControlJSON is one control strategy of `outlook --control`; Points run over
// controlEfforts, and Threshold is the effort that brings R to 1.
type outlookControlJSON struct {
	Strategy  string                    `json:"strategy"`
	Threshold float64                   `json:"threshold"`
	Points    []outlookControlPointJSON `json:"points"`
}

type outlookControlPointJSON struct {
	Effort                float64 `json:"effort"`
	R                     float64 `json:"R"`
	ExtinctionProbability float64 `json:"extinction_probability"`
}

// controlEfforts are the efforts `outlook --control` evaluates.
var controlEfforts = []float64{0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1}

// outlookControl evaluates every control strategy the distribution supports; targeted
// control needs a distribution of individual R, which an offspring list lacks.
func outlookControl(d offspring.Distribution) ([]outlookControlJSON, error) {
	var out []outlookControlJSON
	for _, s := range branching.ControlStrategies {
		if _, err := branching.Controlled(d, s, 0); err != nil {
			if s == branching.ControlTargeted {
				continue
			}
			return nil, err
		}
		pts, err := branching.ControlCurve(d, s, controlEfforts)
		if err != nil {
			return nil, err
		}
		th, err := branching.ControlThreshold(d, s)
		if err != nil {
			return nil, err
		}
		c := outlookControlJSON{Strategy: s, Threshold: th}
		for _, p := range pts {
			c.Points = append(c.Points, outlookControlPointJSON{Effort: p.Effort, R: p.R, ExtinctionProbability: p.Extinction})
		}
		out = append(out, c)
	}
	return out, nil
}

func printControl(w io.Writer, cs []outlookControlJSON) {
	fmt.Fprintf(w, "\nControl (Lloyd-Smith et al. 2005): R and the chance one introduction dies out\n")
	fmt.Fprintf(w, "  %-8s", "effort")
	for _, c := range cs {
		fmt.Fprintf(w, " %21s", c.Strategy)
	}
	fmt.Fprintln(w)
	for i, e := range controlEfforts {
		fmt.Fprintf(w, "  %-8s", strconv.FormatFloat(100*e, 'f', 0, 64)+"%")
		for _, c := range cs {
			p := c.Points[i]
			fmt.Fprintf(w, "   R %6.3f  q %8.6f", p.R, p.ExtinctionProbability)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintf(w, "  %-8s", "R < 1 at")
	for _, c := range cs {
		fmt.Fprintf(w, " %20.4f%%", 100*c.Threshold)
	}
	fmt.Fprintln(w)
	if len(cs) < len(branching.ControlStrategies) {
		fmt.Fprintln(w, "  (no targeted control: a list of offspring probabilities gives no individual R to rank cases by)")
	}
}

type outlookGenerationJSON struct {
	N             int       `json:"n"`
	PZero         float64   `json:"p_zero"`
	Mean          *float64  `json:"mean"`
	Variance      *float64  `json:"variance"`
	PMF           []float64 `json:"pmf"`
	TruncatedMass float64   `json:"truncated_mass"`
}

func newOutlookJSON(r *branching.OutlookResult) outlookJSON {
	var o outlookJSON
	d := r.Distribution
	o.Model.Name, o.Model.R, o.Mean = d.Name(), d.Mean(), d.Mean()
	if mp, ok := d.(offspring.MixedPoisson); ok {
		if g, ok := mp.IndividualR().(offspring.GammaNu); ok {
			o.Model.K = &g.Shape
		}
	}
	o.ExtinctionProbability, o.MajorOutbreakProbability = r.ExtinctionProbability, r.MajorOutbreakProbability
	o.ShareTarget, o.ShareByNu, o.ShareByOffspring, o.SSEThreshold = r.ShareTarget, r.ShareByNu, r.ShareByOffspring, r.SSEThreshold
	for _, g := range r.Generations {
		o.Generations = append(o.Generations, outlookGenerationJSON{N: g.N, PZero: g.PZero, Mean: g.Mean,
			Variance: g.Variance, PMF: g.PMF, TruncatedMass: g.TruncatedMass})
	}
	o.ChainSize.PMF, o.ChainSize.Mean, o.ChainSize.TruncatedMass = r.ChainSize.PMF, r.ChainSize.Mean, r.ChainSize.TruncatedMass
	return o
}
