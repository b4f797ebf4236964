package render

// TEST FIXTURES. The Summaries below are written by hand to look like a real run (an invented
// outbreak of about 400 cases); they are not output of the pipeline and their numbers are
// only roughly consistent with each other.

import (
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

func fp(x float64) *float64 { return &x }
func ip(n int) *int         { return &n }

func day(s string) linelist.Day {
	d, err := linelist.ParseISODay(s)
	if err != nil {
		panic(err)
	}
	return d
}

func dp(s string) *linelist.Day { d := day(s); return &d }

func est(e, plo, phi, blo, bhi float64) analysis.Estimate {
	return analysis.Estimate{Estimate: fp(e), Percentile: [2]*float64{fp(plo), fp(phi)}, BCa: [2]*float64{fp(blo), fp(bhi)}}
}

// fixtureSummary is a complete Summary: every optional section present.
func fixtureSummary() *analysis.Summary {
	weeks := []linelist.Day{}
	for i := 0; i < 12; i++ {
		weeks = append(weeks, day("2024-01-01")+linelist.Day(7*i))
	}
	households := []int{2, 5, 9, 14, 20, 26, 30, 28, 22, 15, 9, 3}
	schools := []int{0, 1, 4, 8, 12, 16, 14, 10, 6, 3, 1, 0}
	care := []int{0, 0, 0, 2, 6, 9, 7, 5, 2, 1, 0, 0}
	series := func(name string, c []int) analysis.Series {
		out := analysis.Series{Name: name}
		for _, n := range c {
			out.Counts = append(out.Counts, ip(n)) // exact: the release withholds small ones
		}
		return out
	}
	total := make([]*int, len(weeks))
	for i := range total {
		total[i] = ip(households[i] + schools[i] + care[i])
	}

	hist := []int{198, 74, 38, 19, 10, 6, 3, 2, 1, 0, 1}
	n := 0
	for _, h := range hist {
		n += h
	}
	nb := make([]float64, len(hist))
	po := make([]float64, len(hist))
	ge := make([]float64, len(hist))
	R, k := 0.80, 0.42
	for x := range hist {
		lg, _ := math.Lgamma(float64(x) + k)
		lk, _ := math.Lgamma(k)
		lf, _ := math.Lgamma(float64(x) + 1)
		nb[x] = float64(n) * math.Exp(lg-lk-lf+k*math.Log(k/(k+R))+float64(x)*math.Log(R/(k+R)))
		po[x] = float64(n) * math.Exp(-R+float64(x)*math.Log(R)-lf)
		ge[x] = float64(n) * math.Pow(R/(1+R), float64(x)) / (1 + R)
	}
	conc := []analysis.CurvePoint{{X: 0, Y: 0}}
	for i := 1; i <= 20; i++ {
		x := float64(i) / 20
		conc = append(conc, analysis.CurvePoint{X: x, Y: math.Min(1, 1-math.Pow(1-x, 3.2))})
	}
	binsR := &analysis.Bins{}
	binsK := &analysis.Bins{}
	for i := 0; i <= 24; i++ {
		binsR.Edges = append(binsR.Edges, 0.64+0.014*float64(i))
		binsK.Edges = append(binsK.Edges, 0.20+0.04*float64(i))
	}
	for i := 0; i < 24; i++ {
		z := (float64(i) - 11.5) / 4.5
		binsR.Counts = append(binsR.Counts, int(math.Round(160*math.Exp(-z*z/2))))
		zk := (float64(i) - 9) / 4
		binsK.Counts = append(binsK.Counts, int(math.Round(140*math.Exp(-zk*zk/2))))
	}

	tree := func(root string, size, shown int, start string) analysis.TreeView {
		tv := analysis.TreeView{Root: root, Size: size, Start: day(start)}
		tv.Nodes = append(tv.Nodes, analysis.TreeNode{ID: root, Parent: -1, Onset: day(start), Setting: "household"})
		depth := 0
		gen := map[int]int{0: 0}
		for i := 1; i < shown; i++ {
			p := (i - 1) / 3
			if i%5 == 0 {
				p = i / 2
			}
			gen[i] = gen[p] + 1
			depth = max(depth, gen[i])
			tv.Nodes = append(tv.Nodes, analysis.TreeNode{ID: fmt.Sprintf("%s-%03d", root, i), Parent: p, Generation: gen[i],
				Onset: day(start) + linelist.Day(5*gen[i]), Setting: []string{"household", "school", "care home"}[i%3]})
			tv.Nodes[p].Offspring++
		}
		tv.Depth = depth
		tv.Hidden = size - shown
		return tv
	}

	var curve []analysis.DayProbability
	for i := 0; i <= 60; i++ {
		curve = append(curve, analysis.DayProbability{Date: day("2024-03-20") + linelist.Day(i), Probability: 1 - math.Exp(-float64(i)/9),
			Lower: fp(1 - math.Exp(-float64(i)/12)), Upper: fp(1 - math.Exp(-float64(i)/7))})
	}
	var density []analysis.CurvePoint
	for i := 0; i <= 60; i++ {
		x := float64(i) / 3
		density = append(density, analysis.CurvePoint{X: x, Y: math.Pow(x, 2.1) * math.Exp(-x/2.3) / (math.Gamma(3.1) * math.Pow(2.3, 3.1))})
	}
	var wr []analysis.WeekR
	for i, w := range weeks {
		r := 1.6 - 0.09*float64(i)
		wr = append(wr, analysis.WeekR{WeekStart: w, Cases: total[i], R: fp(r), Lower: fp(r * 0.75), Upper: fp(r * 1.3), Censored: i >= 10})
	}
	wr[0].Lower = nil

	return &analysis.Summary{
		Tool: analysis.Tool{Name: "caseweave", Version: "0.9.0"},
		AsOf: day("2024-03-24"),
		Seed: 20240324,
		Settings: analysis.RunSettings{CensorDays: 12, CensorDaysSource: "serial_interval_p95", Replicates: 2000, Level: 0.95,
			Interval: "bca", Unit: "case", InferMissing: true, SuppressBelow: 5, Pseudonymised: true},
		Input: analysis.Input{Path: "/home/analyst/exports/linelist-2024-03-24.csv", SHA256: "9f2c1b7e4d0a6c3b8e5f1a2d7c4b9e0f6a3d8c1b5e7f2a4c9d0b6e3f8a1c5d7e",
			Rows: 423, Used: 409, Rejected: 14},
		ProblemCounts: []analysis.ProblemCount{
			{Code: linelist.CodeDuplicateID, Severity: linelist.SeverityError, Count: 6, FirstRows: []int{17, 88, 140}},
			{Code: linelist.CodeBadDate, Severity: linelist.SeverityError, Count: 8, FirstRows: []int{5, 61, 302}},
			{Code: linelist.CodeUnknownInfector, Severity: linelist.SeverityWarning, Count: 11, FirstRows: []int{23, 24, 190}},
			{Code: linelist.CodeOnsetBeforeInfector, Severity: linelist.SeverityWarning, Count: 9, FirstRows: []int{44, 97, 231}},
		},
		Tree: analysis.Tree{Cases: 409, Linked: 318, Roots: 91, Clusters: 91, LargestCluster: 57, MaxGeneration: 7, Imported: 12},
		Offspring: &analysis.Offspring{
			N: n, Censored: 57, CensorDays: 12, Mean: 0.80, Variance: 2.31, Histogram: hist,
			Models: []analysis.ModelFit{
				{Name: "negative binomial", Parameters: []analysis.Parameter{{Name: "R", Estimate: fp(0.80), SE: fp(0.07)}, {Name: "k", Estimate: fp(0.42), SE: fp(0.06)}},
					LogLik: -341.2, AIC: 686.4, DeltaAIC: 0, Expected: nb},
				{Name: "geometric", Parameters: []analysis.Parameter{{Name: "R", Estimate: fp(0.80), SE: fp(0.06)}}, LogLik: -352.9, AIC: 707.8, DeltaAIC: 21.4, Expected: ge},
				{Name: "Poisson", Parameters: []analysis.Parameter{{Name: "R", Estimate: fp(0.80), SE: fp(0.05)}}, LogLik: -410.5, AIC: 823.0, DeltaAIC: 136.6, Expected: po},
			},
			BestModel: "negative binomial",
			R:         est(0.80, 0.70, 0.91, 0.71, 0.92),
			K:         est(0.42, 0.30, 0.61, 0.31, 0.63),
			Bootstrap: analysis.BootstrapInfo{Replicates: 2000, Seed: 20240324, Unit: "case", Level: 0.95, PoissonLimitShare: 0.002},
			ChainSizeFit: &analysis.ChainSizeFit{R: 0.77, K: fp(0.38), LogLik: -190.4, RCI: [2]*float64{fp(0.66), fp(0.86)},
				KCI: [2]*float64{fp(0.25), fp(0.60)}, Clusters: 91, Censored: 9, Converged: true},
			ZeroShare: 0.56, ShareCausing80pctObserved: fp(0.21),
			Superspreaders: []string{"PX-0041", "PX-0107", "PX-0233"}, SSEThreshold: 4,
			Concentration: conc, ReplicatesR: binsR, ReplicatesK: binsK,
		},
		Outlook: &analysis.Outlook{
			Model: "negative binomial", ExtinctionProbability: est(1, 1, 1, 1, 1), MajorOutbreakProbability: est(0, 0, 0, 0, 0),
			ShareCausing80pct: est(0.19, 0.15, 0.24, 0.15, 0.25), SSEThreshold: 4, Active: 57,
			CurrentChains: &analysis.CurrentChains{DieOut: est(0.93, 0.71, 0.99, 0.70, 0.99), Pending: est(31.2, 22.0, 44.1, 21.5, 45.0),
				Further: analysis.Estimate{Estimate: fp(310), Percentile: [2]*float64{fp(140), nil}, BCa: [2]*float64{fp(150), nil}}},
			Projection: []analysis.Projection{
				{Generation: 1, Mean: fp(45.6), P50: [2]*int{ip(36), ip(53)}, P90: [2]*int{ip(25), ip(70)}, PZero: 0},
				{Generation: 2, Mean: fp(36.5), P50: [2]*int{ip(26), ip(45)}, P90: [2]*int{ip(14), ip(64)}, PZero: 0.001},
				{Generation: 3, Mean: fp(29.2), P50: [2]*int{ip(18), ip(38)}, P90: [2]*int{ip(8), ip(58)}, PZero: 0.01},
				{Generation: 4, Mean: fp(23.4), P50: [2]*int{ip(13), ip(31)}, P90: [2]*int{ip(4), ip(51)}, PZero: 0.04},
			},
			ChainSize: []float64{0.55, 0.14, 0.07, 0.05},
		},
		SerialInterval: &analysis.SerialInterval{
			N: 261, Negative: 9, NegativeTreatment: "kept and shown, left out of the fit", BestModel: "gamma",
			Models: []analysis.SerialModel{
				{Name: "gamma", Mean: 7.1, SD: 4.1, Params: map[string]float64{"shape": 3.1, "scale": 2.3}, LogLik: -701.2, AIC: 1406.4},
				{Name: "lognormal", Mean: 7.3, SD: 4.9, Params: map[string]float64{"meanlog": 1.8, "sdlog": 0.6}, LogLik: -708.0, AIC: 1420.0},
				{Name: "Weibull", Mean: 7.0, SD: 3.9, Params: map[string]float64{"shape": 1.9, "scale": 7.9}, LogLik: -703.3, AIC: 1410.6},
			},
			Quantiles: analysis.SerialQuantiles{P50: 6.3, P95: 14.8, P99: 19.6},
			MeanCI:    [2]*float64{fp(6.6), fp(7.6)},
			Histogram: []analysis.SerialHistogramBin{{Days: -2, Count: 3}, {Days: -1, Count: 6}, {Days: 0, Count: 4}, {Days: 1, Count: 6},
				{Days: 2, Count: 12}, {Days: 3, Count: 19}, {Days: 4, Count: 24}, {Days: 5, Count: 27}, {Days: 6, Count: 26},
				{Days: 7, Count: 23}, {Days: 8, Count: 20}, {Days: 9, Count: 16}, {Days: 10, Count: 13}, {Days: 11, Count: 10},
				{Days: 12, Count: 8}, {Days: 13, Count: 6}, {Days: 14, Count: 5}, {Days: 16, Count: 4}, {Days: 18, Count: 2}},
			Density: density,
		},
		TimeVarying: wr,
		Forecast: &analysis.Forecast{Simulations: 2000, Replicates: 200, DelayCases: 240, Weeks: []analysis.ForecastWeek{
			{WeekStart: weeks[len(weeks)-1] + 7, Mean: fp(21.4), Median: ip(20), P50: [2]*int{ip(14), ip(27)}, P90: [2]*int{ip(7), ip(41)}},
			{WeekStart: weeks[len(weeks)-1] + 14, Mean: fp(19.8), Median: ip(17), P50: [2]*int{ip(9), ip(27)}, P90: [2]*int{ip(2), ip(52)}},
			{WeekStart: weeks[len(weeks)-1] + 21, Mean: fp(18.1), Median: ip(14), P50: [2]*int{ip(5), ip(26)}, P90: [2]*int{ip(0), ip(63)}},
		}},
		Nowcast: &analysis.Nowcast{DelayCases: 240, Method: "reverse-time hazard", Delay: []float64{0.2, 0.5, 0.3}, Weeks: []analysis.NowcastWeek{
			{WeekStart: weeks[len(weeks)-2], Observed: total[len(weeks)-2], Expected: float64(*total[len(weeks)-2]) + 1.2, Median: *total[len(weeks)-2] + 1,
				P50: [2]int{*total[len(weeks)-2], *total[len(weeks)-2] + 2}, P90: [2]int{*total[len(weeks)-2], *total[len(weeks)-2] + 4}},
			{WeekStart: weeks[len(weeks)-1], Observed: total[len(weeks)-1], Unknown: 1, Expected: float64(*total[len(weeks)-1]) + 9.5, Median: *total[len(weeks)-1] + 9,
				P50: [2]int{*total[len(weeks)-1] + 6, *total[len(weeks)-1] + 12}, P90: [2]int{*total[len(weeks)-1] + 3, *total[len(weeks)-1] + 18}},
		}},
		Backtest: &analysis.Backtest{Dates: []linelist.Day{weeks[6], weeks[7]}, SettleDays: 7, LastScored: weeks[10] + 6,
			Forecasts: []analysis.BacktestWeek{
				{AsOf: weeks[6] + 3, Horizon: 1, WeekStart: weeks[7], Median: ip(20), P50: [2]*int{ip(15), ip(26)}, P90: [2]*int{ip(8), ip(40)}, Observed: 24},
				{AsOf: weeks[7] + 3, Horizon: 1, WeekStart: weeks[8], Median: ip(22), P50: [2]*int{ip(16), ip(29)}, P90: [2]*int{ip(9), ip(44)}, Observed: 35},
			},
			Horizons: []analysis.HorizonScore{{Horizon: 1, Scored: 2, Cover50: fp(0.5), Cover90: fp(1), WIS: fp(3.1), AbsError: fp(8.5)}},
			Verdict:  "Over 2 forecasts 1 week ahead, the 90% ranges held the outcome 100% of the time."},
		InferredLinks: &analysis.InferredLinks{Inferred: 38, NoCandidate: 4, Method: "augmentation", Share: 0.21,
			Stability: fp(0.64), BurnIn: 200, BurnInZ: fp(0.4), Matters: true,
			RecordedR: analysis.Estimate{Estimate: fp(0.71), Percentile: [2]*float64{fp(0.6), fp(0.83)}, BCa: [2]*float64{fp(0.61), fp(0.84)}},
			RecordedK: analysis.Estimate{Estimate: fp(0.35), Percentile: [2]*float64{fp(0.25), fp(0.5)}, BCa: [2]*float64{fp(0.26), fp(0.52)}}},
		SinceLast: &analysis.SinceLast{Previous: day("2024-03-17"), PreviousVersion: "0.9.0", NewByOnset: ip(24), NewByReport: ip(27),
			Revisions: analysis.Revisions{Late: ip(6), Removed: nil, OnsetChanged: ip(0), LinksAdded: ip(9), LinksRemoved: nil, LinksMoved: ip(5)},
			Changes: []analysis.Change{
				{Name: "R", Now: analysis.Span{Estimate: fp(1.21), Lower: fp(0.98), Upper: fp(1.5)}, Then: analysis.Span{Estimate: fp(1.34), Lower: fp(1.05), Upper: fp(1.7)}},
				{Name: "k", Now: analysis.Span{Estimate: fp(0.41), Lower: fp(0.3), Upper: fp(0.6)}, Then: analysis.Span{Estimate: fp(0.45), Lower: fp(0.31), Upper: fp(0.7)}},
				{Name: "recent_R", Now: analysis.Span{Estimate: fp(0.7), Lower: fp(0.5), Upper: fp(0.9)}, Then: analysis.Span{Estimate: fp(1.4), Lower: fp(1.1), Upper: fp(1.8)}, Beyond: true},
				{Name: "die_out", Now: analysis.Span{Estimate: fp(0.3), Lower: fp(0.1), Upper: fp(0.6)}, Then: analysis.Span{Estimate: fp(0.2)}},
			}},
		Trend: []analysis.TrendPoint{
			{AsOf: day("2024-03-10"), Cases: 180, R: analysis.Span{Estimate: fp(1.4), Lower: fp(1.1), Upper: fp(1.8)}, K: analysis.Span{Estimate: fp(0.5), Lower: fp(0.3), Upper: fp(0.8)},
				NextWeek: &analysis.Span{Estimate: fp(25), Lower: fp(9), Upper: fp(48)}},
			{AsOf: day("2024-03-17"), Cases: 210, R: analysis.Span{Estimate: fp(1.34), Lower: fp(1.05), Upper: fp(1.7)}, K: analysis.Span{Estimate: fp(0.45), Lower: fp(0.31), Upper: fp(0.7)},
				RecentR: analysis.Span{Estimate: fp(1.4), Lower: fp(1.1), Upper: fp(1.8)}, NextWeek: &analysis.Span{Estimate: fp(22), Lower: fp(8), Upper: fp(44)}},
			{AsOf: day("2024-03-24"), Cases: 234, R: analysis.Span{Estimate: fp(1.21), Lower: fp(0.98), Upper: fp(1.5)}, K: analysis.Span{Estimate: fp(0.41), Lower: fp(0.3), Upper: fp(0.6)},
				RecentR: analysis.Span{Estimate: fp(0.7), Lower: fp(0.5), Upper: fp(0.9)}, DieOut: analysis.Span{Estimate: fp(0.3), Lower: fp(0.1), Upper: fp(0.6)}},
		},
		ForecastCheck: &analysis.ForecastCheck{Scored: 2, Within50: 1, Within90: 2, MeanWIS: fp(3.1), Weeks: []analysis.CheckedWeek{
			{Made: day("2024-03-10"), WeekStart: weeks[len(weeks)-2], Median: ip(25), P50: [2]*int{ip(17), ip(33)}, P90: [2]*int{ip(9), ip(48)}, Observed: ip(30), Within50: true, Within90: true, WIS: fp(2.5)},
			{Made: day("2024-03-17"), WeekStart: weeks[len(weeks)-1], Median: ip(22), P50: [2]*int{ip(15), ip(29)}, P90: [2]*int{ip(8), ip(44)}, Observed: ip(12), Within90: true, WIS: fp(3.7)},
		}},
		Backfill: &analysis.Backfill{Weeks: weeks[len(weeks)-3:], Reports: []analysis.BackfillReport{
			{AsOf: day("2024-03-10"), Counts: []*int{ip(40), nil, nil}},
			{AsOf: day("2024-03-17"), Counts: []*int{ip(44), ip(21), nil}},
			{AsOf: day("2024-03-24"), Counts: []*int{ip(45), ip(26), ip(3)}}, // Release takes this run's from EpiCurve
		}},
		EndOfOutbreak: &analysis.EndOfOutbreak{Curve: curve, P95Date: dp("2024-04-16"), P99Date: dp("2024-05-01"), LastOnset: day("2024-03-20"),
			P95Range:    [2]*linelist.Day{dp("2024-04-10"), dp("2024-04-24")},
			RuleOfThumb: &analysis.RuleOfThumb{LongestIncubationDays: 14, Date: day("2024-04-17")}},
		EpiCurve: &analysis.EpiCurve{Weeks: weeks, Total: total, Series: []analysis.Series{
			series("household", households), series("school", schools), series("care home", care)}},
		Clusters: &analysis.Clusters{
			SizeHistogram: []analysis.SizeCount{
				{Size: 1, Count: 48, Censored: 4, Expected: fp(50.1)}, {Size: 2, Count: 14, Censored: 2, Expected: fp(12.9)},
				{Size: 3, Count: 8, Censored: 1, Expected: fp(6.4)}, {Size: 4, Count: 5, Expected: fp(4.0)},
				{Size: 5, Count: 4, Censored: 1, Expected: fp(2.8)}, {Size: 8, Count: 3, Expected: fp(1.2)},
				{Size: 12, Count: 3, Censored: 1, Expected: fp(0.6)}, {Size: 23, Count: 2}, {Size: 41, Count: 1}, {Size: 57, Count: 1},
			},
			Largest:    []analysis.TreeView{tree("PX-0041", 57, 40, "2024-01-03"), tree("PX-0107", 41, 30, "2024-01-20"), tree("PX-0233", 23, 23, "2024-02-05")},
			NodesShown: 40,
		},
		Control: fixtureControl(),
		Multitype: &analysis.Multitype{
			Groups: []string{"0–17", "18–39", "40–64 + 65+"}, MinCases: 10, Pooled: true,
			PoolRule: "an age group with fewer than 10 cases outside the censoring window is joined to the next older group",
			Matrix:   [][]float64{{0.5, 0.2, 0.1}, {0.3, 0.6, 0.2}, {0.1, 0.2, 0.4}},
			K:        []*float64{fp(0.4), fp(0.3), nil}, R: est(0.93, 0.71, 1.2, 0.7, 1.19), Replicates: 1000,
			Extinction: []float64{1, 1, 1}, Start: "active",
			GenerationShares: [][]float64{{0.3, 0.5, 0.2}, {0.32, 0.47, 0.21}},
			StableShares:     []float64{0.33, 0.45, 0.22}, UnknownAge: ip(0), UnknownInfectees: ip(12),
		},
		AgeMixing: &analysis.AgeMixing{
			Groups: []string{"0–17", "18–39", "40–64", "65+"},
			Counts: [][]*int{{ip(41), ip(22), ip(9), ip(3)}, {ip(30), ip(58), ip(25), ip(6)}, {ip(11), ip(27), ip(39), ip(14)}, {ip(2), ip(5), ip(12), ip(17)}},
			Links:  318,
		},
		Strata: []analysis.Stratum{
			{Column: "setting", Value: "household", Cases: ip(203), Counted: ip(180), MeanOffspring: fp(0.71)},
			{Column: "setting", Value: "school", Cases: ip(75), Counted: ip(66), MeanOffspring: fp(1.12)},
			{Column: "setting", Value: "care home", Cases: ip(32), Counted: ip(30), MeanOffspring: fp(0.94)},
			{Column: "setting", Value: "prison", Cases: ip(3), Counted: ip(3), MeanOffspring: fp(0.33)},
		},
		Notes: []string{"The geometric model was fitted for comparison only."},
	}
}

// minimalSummary has only what every run has: no optional section.
func minimalSummary() *analysis.Summary {
	return &analysis.Summary{
		Tool:     analysis.Tool{Name: "caseweave", Version: "0.9.0"},
		AsOf:     day("2024-03-24"),
		Seed:     1,
		Settings: analysis.RunSettings{Level: 0.95, Interval: "percentile", Unit: "case", SuppressBelow: 5},
		Input:    analysis.Input{Path: "cases.csv", SHA256: "00", Rows: 3, Used: 3},
		Tree:     analysis.Tree{Cases: 3, Roots: 3, Clusters: 3, LargestCluster: 1},
	}
}

// hostileStrings are data values that would become markup, script or table structure if any
// path let them through unescaped.
var hostileStrings = []string{
	`<img src=x onerror=alert(1)>`,
	`</script><script>alert(2)</script>`,
	`*emph* _under_ **bold**`,
	"[link](javascript:alert(3))",
	`a | b | c`,
	"`code` and ```fence",
	`"double" 'single' & &amp;`,
	"line one\n# heading\n\n- item",
	"<!-- comment --> __f__",
	"=HYPERLINK(\"http://x\")",
}

// hostileSummary puts hostile strings wherever the Summary carries text from the line list.
func hostileSummary() *analysis.Summary {
	s := fixtureSummary()
	s.Scope = &analysis.Scope{Column: "setting", Value: hostileStrings[0]}
	for i, h := range hostileStrings {
		s.Strata = append(s.Strata, analysis.Stratum{Column: "setting", Value: h, Cases: ip(10 + i), MeanOffspring: fp(0.5)})
		s.Notes = append(s.Notes, h)
	}
	s.EpiCurve.Series[0].Name = hostileStrings[1]
	s.EpiCurve.Series[1].Name = hostileStrings[8]
	s.AgeMixing.Groups[0] = hostileStrings[1]
	s.Multitype.Groups[0] = hostileStrings[1]
	s.Clusters.Largest[0].Nodes[1].Setting = hostileStrings[1]
	s.Offspring.Models[0].Name = hostileStrings[4]
	s.Offspring.Superspreaders = append(s.Offspring.Superspreaders, hostileStrings[9])
	s.Input.Path = hostileStrings[3]
	s.Tool.Version = hostileStrings[0]
	s.SerialInterval.NegativeTreatment = hostileStrings[2]
	return s
}

// fixtureControl is a control section for R = 0.8 (every threshold 0).
func fixtureControl() *analysis.Control {
	c := &analysis.Control{Model: "negative_binomial", Replicates: 500}
	for i := 0; i <= 20; i++ {
		c.Efforts = append(c.Efforts, float64(i)/20)
	}
	for _, name := range []string{"population", "individual", "targeted"} {
		st := analysis.ControlStrategy{Name: name, Threshold: est(0, 0, 0.2, 0, 0.21)}
		for _, e := range c.Efforts {
			r := 0.8 * (1 - e)
			st.R = append(st.R, est(r, 0.6*(1-e), 1.05*(1-e), 0.6*(1-e), 1.05*(1-e)))
			st.Extinction = append(st.Extinction, est(1, 0.9+0.1*e, 1, 0.9+0.1*e, 1))
		}
		c.Strategies = append(c.Strategies, st)
	}
	return c
}
