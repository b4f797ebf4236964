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
	)
	c := &cobra.Command{
		Use:   "outlook (--model poisson|geometric|negbin --R x [--k x] | --pmf p0,p1,... [--normalize]) [flags]",
		Short: "Branching-process outlook of an offspring distribution: extinction, generations, chains",
		Long: `outlook takes an offspring distribution — a model with its parameters, or a list of
probabilities P(Z=0), P(Z=1), ... — and works out the extinction probability, the distribution
of the next generations' sizes from --active cases, the chain-size distribution, the share of
cases responsible for --share of transmission, and the superspreading threshold.`,
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
			if jsonOut != "" {
				return writeJSON(e, jsonOut, newOutlookJSON(res))
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
