package analysis

import "github.com/caseweave/caseweave/pipeline/linelist"

// Summary is everything a report template may show, and the JSON that `check`, `estimate`
// and `report --json` write. It holds aggregates only: no row of the line list, and no column
// outside the canonical set, reaches it. Case identifiers appear in Superspreaders and in the
// largest trees; the report pseudonymises them (keyed hash) unless --show-ids is given.
//
// Nullable numbers are pointers; every float in a Summary is finite (NaN and ±Inf are
// represented as null), so the JSON is valid and charts never receive non-numbers.
type Summary struct {
	Tool     Tool         `json:"tool"`
	AsOf     linelist.Day `json:"as_of"`
	Seed     uint64       `json:"seed"`
	Scope    *Scope       `json:"scope,omitempty"`
	Settings RunSettings  `json:"settings"`

	Input         Input          `json:"input"`
	Problems      []Problem      `json:"problems"`
	ProblemCounts []ProblemCount `json:"problem_counts"`
	Tree          Tree           `json:"tree"`

	Offspring      *Offspring      `json:"offspring,omitempty"`
	Outlook        *Outlook        `json:"outlook,omitempty"`
	SerialInterval *SerialInterval `json:"serial_interval,omitempty"`
	TimeVarying    []WeekR         `json:"time_varying,omitempty"`
	InferredLinks  *InferredLinks  `json:"inferred_links,omitempty"`
	EndOfOutbreak  *EndOfOutbreak  `json:"end_of_outbreak,omitempty"`
	Forecast       *Forecast       `json:"forecast,omitempty"`
	Assessment     *Assessment     `json:"assessment,omitempty"`
	Control        *Control        `json:"control,omitempty"`
	Multitype      *Multitype      `json:"multitype,omitempty"`

	EpiCurve  *EpiCurve  `json:"epi_curve,omitempty"`
	Clusters  *Clusters  `json:"clusters,omitempty"`
	AgeMixing *AgeMixing `json:"age_mixing,omitempty"`
	Strata    []Stratum  `json:"strata,omitempty"`

	// Cautions are sentences computed from this run's numbers on what its estimates cannot
	// tell (see Caution); the report shows them beside its general caution.
	Cautions []Caution `json:"cautions,omitempty"`

	// Notes are plain-language remarks the run made about itself (a model that could not be
	// fitted, a section left out for lack of data); the report shows them.
	Notes []string `json:"notes,omitempty"`

	// SinceLast compares this run with the latest earlier run of the same jurisdiction in
	// the run archive (--history); nil without an archive or an earlier run.
	SinceLast *SinceLast `json:"since_last,omitempty"`
	// Trend is the key estimates of every archived run of the jurisdiction and of this one,
	// oldest first; empty without an archive.
	Trend []TrendPoint `json:"trend,omitempty"`
	// ForecastCheck sets the archived forecasts for weeks that have now passed against the
	// cases observed in them; nil when no archived forecast covers a past week.
	ForecastCheck *ForecastCheck `json:"forecast_check,omitempty"`

	// Nowcast is the expected final count of the recent onset days, whose cases are not
	// all reported yet.
	Nowcast *Nowcast `json:"nowcast,omitempty"`

	// Backtest scores the forecasts past analysis dates would have made (RunBacktest); set
	// only when asked for (report --backtest).
	Backtest *Backtest `json:"backtest,omitempty"`

	// Backfill is each onset week's count as each archived report and this run knew it;
	// nil without an earlier run in the archive.
	Backfill *Backfill `json:"backfill,omitempty"`
}

// Nowcast corrects the last weeks of the epidemic curve for the cases not yet reported: the
// onset-to-report delay estimated with right truncation taken into account, and for each
// recent onset day the expected final count with prediction intervals (package forecast).
// With fewer than 20 cases that have a report date (DelayCases) it holds no days: then
// nothing can say how many are still to come.
type Nowcast struct {
	// DelayCases counts the cases with an onset and a report date; Method names the
	// estimator of the delay, Delay its probabilities by day, P(delay = d).
	DelayCases int       `json:"delay_cases"`
	Method     string    `json:"method"`
	Delay      []float64 `json:"delay,omitempty"`
	// Days are the recent onset days, oldest first; Release leaves them out (their counts
	// may be small) and keeps Weeks.
	Days  []NowcastDay  `json:"days,omitempty"`
	Weeks []NowcastWeek `json:"weeks,omitempty"`
}

// NowcastDay is one onset day: the cases listed, the estimated share reported by the
// analysis date, the expected final count and the median and central 50% and 90%
// prediction intervals of the final count.
type NowcastDay struct {
	Onset    linelist.Day `json:"onset"`
	Observed int          `json:"observed"`
	Reported float64      `json:"reported"`
	// Unknown: no delay this short was seen, so nothing says how many are to come; the
	// figures are the observed count.
	Unknown  bool    `json:"unknown"`
	Expected float64 `json:"expected"`
	Median   int     `json:"median"`
	P50      [2]int  `json:"p50"`
	P90      [2]int  `json:"p90"`
}

// NowcastWeek is the same summed over the nowcast days of one ISO week; Observed is null
// where the released epidemic curve withholds the week's count.
type NowcastWeek struct {
	WeekStart linelist.Day `json:"week_start"`
	Observed  *int         `json:"observed"`
	// Unknown counts the days of the week whose final count cannot be estimated: the
	// week's figures are then a lower bound.
	Unknown  int     `json:"unknown"`
	Expected float64 `json:"expected"`
	Median   int     `json:"median"`
	P50      [2]int  `json:"p50"`
	P90      [2]int  `json:"p90"`
}

// Tool names the program that made the summary.
type Tool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

// Scope is set when the summary covers one value of a --by column.
type Scope struct {
	Column string `json:"column"`
	Value  string `json:"value"`
}

// RunSettings records the analysis choices, so a reader can audit and repeat the run.
type RunSettings struct {
	CensorDays       int     `json:"censor_days"`
	CensorDaysSource string  `json:"censor_days_source"` // "flag", "serial_interval_p95" or "default"
	Replicates       int     `json:"replicates"`
	Level            float64 `json:"level"`
	Interval         string  `json:"interval"` // which interval headlines: "percentile" or "bca"
	Unit             string  `json:"unit"`     // bootstrap unit: "case" or "cluster"
	InferMissing     bool    `json:"infer_missing"`
	SuppressBelow    int     `json:"suppress_below"` // the threshold a released view applied; 0 in the full summary
	Pseudonymised    bool    `json:"pseudonymised"`  // identifiers replaced (a released view)
}

// Input describes what was read: Path and SHA256 are those of the file when one was read
// ("" for SHA256 when several were), and Files lists every file. Rows = Used + Rejected
// always, in total and for each file.
type Input struct {
	Path     string      `json:"path"`
	SHA256   string      `json:"sha256"`
	Rows     int         `json:"rows"`
	Used     int         `json:"used"`
	Rejected int         `json:"rejected"`
	Files    []InputFile `json:"files"`
}

// InputFile is one file read: its format ("csv" or "xlsx", Gzip when it was compressed),
// the workbook sheet chosen and why, the header's line or spreadsheet row, and its rows.
// With several files (often one per region) the row counts are a count by place, so a
// released view withholds small ones (null); Rows = Used + Rejected where all are shown.
type InputFile struct {
	Path        string `json:"path"`
	SHA256      string `json:"sha256"`
	Format      string `json:"format"`
	Gzip        bool   `json:"gzip"`
	Sheet       string `json:"sheet,omitempty"`
	SheetReason string `json:"sheet_reason,omitempty"`
	DateSystem  string `json:"date_system,omitempty"` // "1900" or "1904", workbooks only
	HeaderRow   int    `json:"header_row"`
	Note        string `json:"note,omitempty"` // where the name and the content disagree
	Rows        *int   `json:"rows"`
	Used        *int   `json:"used"`
	Rejected    *int   `json:"rejected"`
}

// Problem is one thing wrong with the input: File is the file it is in, Row the physical
// line of a CSV file (header = line 1) or the spreadsheet row of a workbook (0 for the file
// as a whole), Place the same in the analyst's words ("line 12", "Cases!C12"), Column the
// canonical column concerned ("" for the row).
type Problem struct {
	File     string            `json:"file"`
	Row      int               `json:"row"`
	Place    string            `json:"place"`
	Column   string            `json:"column"`
	Code     linelist.Code     `json:"code"`
	Severity linelist.Severity `json:"severity"`
	Message  string            `json:"message"`
}

// ProblemCount is the tally of one problem code, with the first few line numbers and their
// places (preceded by the file's base name when several files were read).
type ProblemCount struct {
	Code        linelist.Code     `json:"code"`
	Severity    linelist.Severity `json:"severity"`
	Count       int               `json:"count"`
	FirstRows   []int             `json:"first_rows"`
	FirstPlaces []string          `json:"first_places"`
}

// Tree holds the transmission forest's statistics. Linked counts cases with a kept infector
// link; roots are generation 0.
type Tree struct {
	Cases          int `json:"cases"`
	Linked         int `json:"linked"`
	Roots          int `json:"roots"`
	Clusters       int `json:"clusters"`
	LargestCluster int `json:"largest_cluster"`
	MaxGeneration  int `json:"max_generation"`
	Imported       int `json:"imported"`
	// CrossingChains counts the chains of a scoped report (--by) that reach beyond its
	// scope, and CasesElsewhere the cases they hold outside it: a chain belongs to the report
	// of every value it touches, with all its cases.
	CrossingChains int `json:"crossing_chains"`
	CasesElsewhere int `json:"cases_elsewhere"`
}

// Estimate is a point estimate with its percentile and BCa bootstrap intervals at the run's
// level. A bound is null when it is unbounded or cannot be computed.
type Estimate struct {
	Estimate   *float64    `json:"estimate"`
	Percentile [2]*float64 `json:"percentile"`
	BCa        [2]*float64 `json:"bca"`
	// Profile is the profile-likelihood interval (R and k only; null bounds elsewhere, and an
	// upper bound null when unbounded).
	Profile [2]*float64 `json:"profile"`
}

// Headline returns the bounds of the named interval (Options.Interval): the profile
// interval where one was computed (R and k), else the percentile bootstrap interval; BCa
// when asked for.
func (e Estimate) Headline(interval string) [2]*float64 {
	switch {
	case interval == IntervalBCa:
		return e.BCa
	case interval == IntervalProfile && (e.Profile[0] != nil || e.Profile[1] != nil):
		return e.Profile
	}
	return e.Percentile
}

// Offspring is the offspring-distribution section [Lloyd-Smith et al. 2005; Efron 1987].
type Offspring struct {
	N          int     `json:"n"`        // cases whose offspring were counted
	Censored   int     `json:"censored"` // cases left out: onset inside the censoring window
	CensorDays int     `json:"censor_days"`
	Mean       float64 `json:"mean"`
	Variance   float64 `json:"variance"`
	Histogram  []int   `json:"histogram"` // Histogram[x] = cases with x offspring

	Models    []ModelFit `json:"models"`
	BestModel string     `json:"best_model"`
	R         Estimate   `json:"R"`
	K         Estimate   `json:"k"`
	// PoissonLimit is true when the sample variance does not exceed the mean: no finite k.
	PoissonLimit bool `json:"poisson_limit"`

	// SmallSample is a warning sentence when the estimates rest on fewer than
	// MinCasesForVerdict cases, empty otherwise.
	SmallSample string `json:"small_sample,omitempty"`

	Bootstrap    BootstrapInfo `json:"bootstrap"`
	ChainSizeFit *ChainSizeFit `json:"chain_size_fit"`

	ZeroShare                 float64  `json:"zero_share"`
	ShareCausing80pctObserved *float64 `json:"share_causing_80pct_observed"`
	// Superspreaders are the cases with more offspring than SSEThreshold, most offspring
	// first; SuperspreaderOffspring[i] is the offspring count of Superspreaders[i].
	Superspreaders         []string `json:"superspreaders"`
	SuperspreaderOffspring []int    `json:"superspreader_offspring"`
	SSEThreshold           int      `json:"sse_threshold"`

	// Concentration is the observed concentration curve (share of cases, largest spreaders
	// first, against share of transmission).
	Concentration []CurvePoint `json:"concentration"`
	// ReplicatesR and ReplicatesK bin the bootstrap replicates for the report's chart.
	ReplicatesR *Bins `json:"replicates_R,omitempty"`
	ReplicatesK *Bins `json:"replicates_k,omitempty"`

	// Likelihood is "truncation" (every case, its offspring negative binomial with mean R·F
	// for its observed share F) or "censor" (cases inside the censoring window left out).
	Likelihood string `json:"likelihood"`
	// ShareFloor is the smallest observed share a case needs under the truncation-aware
	// likelihood; BelowShareFloor counts the cases left out below it (also in Censored).
	ShareFloor      float64 `json:"share_floor,omitempty"`
	BelowShareFloor int     `json:"below_share_floor"`
	// IntervalShown is the interval that headlines R and k ("profile", "percentile" or
	// "bca"); IntervalCoverage is a sentence on how it covered in the coverage study at
	// about this number of cases.
	IntervalShown    string `json:"interval_shown"`
	IntervalCoverage string `json:"interval_coverage"`
}

// ModelFit is one offspring model fitted by maximum likelihood, with its parameters in the
// model's order (R first). Expected[x] is n·P(Z = x) for x over the histogram's range, for
// the fitted-model overlay. AIC = 2·(number of parameters) − 2·LogLik.
type ModelFit struct {
	Name       string      `json:"name"`
	Parameters []Parameter `json:"parameters"`
	LogLik     float64     `json:"loglik"`
	AIC        float64     `json:"aic"`
	DeltaAIC   float64     `json:"delta_aic"`
	Expected   []float64   `json:"expected"`
}

// Parameter is one fitted parameter with its standard error from the observed information.
// Estimate is null when unbounded (the negative binomial's k in the Poisson limit); SE is
// null when the information gives none.
type Parameter struct {
	Name     string   `json:"name"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
}

// BootstrapInfo records how the intervals were made.
type BootstrapInfo struct {
	Replicates int     `json:"replicates"`
	Seed       uint64  `json:"seed"`
	Unit       string  `json:"unit"`
	Level      float64 `json:"level"`
	// PoissonLimitShare is the share of replicates with no finite k (their k is unbounded).
	PoissonLimitShare float64 `json:"poisson_limit_share"`
}

// ChainSizeFit is R and k fitted from cluster sizes alone [Blumberg & Lloyd-Smith 2013].
type ChainSizeFit struct {
	R         float64     `json:"R"`
	K         *float64    `json:"k"`
	LogLik    float64     `json:"loglik"`
	RCI       [2]*float64 `json:"R_ci"`
	KCI       [2]*float64 `json:"k_ci"`
	Clusters  int         `json:"clusters"`
	Censored  int         `json:"censored"`
	Converged bool        `json:"converged"`
	// IntervalMethod is "cluster_bootstrap" (percentile, Replicates replicates) or, when
	// censored clusters are so large that refitting is too costly, "wald_log" (log-scale
	// large-sample intervals from the observed information).
	IntervalMethod string `json:"interval_method"`
	Replicates     int    `json:"replicates"`
	// Informative is ChainSizeInformative's reading of the chains; when false the report
	// leaves the fit out and says why (Reason).
	Informative bool   `json:"informative"`
	Reason      string `json:"reason,omitempty"`
	// Complete counts the chains no longer growing, CompleteMulti those with more than one case.
	Complete      int `json:"complete"`
	CompleteMulti int `json:"complete_multi"`
	// Overlaps is whether the fit's interval for R meets the link-based one; when it does
	// not the report names what can pull them apart.
	Overlaps bool `json:"overlaps"`
}

// Bins is a histogram over equal-width bins: Counts[i] values fell in [Edges[i], Edges[i+1]);
// Overflow counts the values above the last edge (beyond the 99th percentile), Infinite the
// values at +∞ (for k: replicates in the Poisson limit). Neither is drawn; the chart's
// caption says how many there were.
type Bins struct {
	Edges    []float64 `json:"edges"`
	Counts   []int     `json:"counts"`
	Overflow int       `json:"overflow"`
	Infinite int       `json:"infinite"`
}

// CurvePoint is one point of a curve in the unit square.
type CurvePoint struct {
	X float64 `json:"x"`
	Y float64 `json:"y"`
}

// Outlook is the branching-process outlook from the fitted model [Harris 1963; Blumberg & Lloyd-Smith 2013].
type Outlook struct {
	Model                    string   `json:"model"`
	ExtinctionProbability    Estimate `json:"extinction_probability"`
	MajorOutbreakProbability Estimate `json:"major_outbreak_probability"`
	ShareCausing80pct        Estimate `json:"share_causing_80pct"`
	SSEThreshold             int      `json:"sse_threshold"`
	Active                   int      `json:"active"`
	// CurrentChains is what the model says of the chains now under way; nil, with
	// CurrentChainsNote saying why, when it cannot be computed.
	CurrentChains     *CurrentChains `json:"current_chains"`
	CurrentChainsNote string         `json:"current_chains_note,omitempty"`
	Projection        []Projection   `json:"projection"`
	// ChainSize is the model's chain-size distribution P(Y = y), y = 1.., against which the
	// observed cluster sizes are drawn.
	ChainSize []float64 `json:"chain_size,omitempty"`
}

// CurrentChains reads the chains now under way: every case of the report with its individual
// reproduction number conditioned on the people it has infected so far in the share of its
// serial interval that has passed (branching.CurrentChains), with bootstrap intervals.
type CurrentChains struct {
	// DieOut is the probability that all of them die out on their own.
	DieOut Estimate `json:"die_out"`
	// Pending is the expected number of people the listed cases have still to infect.
	Pending Estimate `json:"pending"`
	// Further is the expected number of cases still to come over all generations; its
	// estimate or upper bound is null where R ≥ 1, which has no finite expectation.
	Further Estimate `json:"further"`
}

// Projection is the predictive distribution of one future generation's case count, mixed
// over bootstrap replicates. P50 and P90 are central prediction intervals; a bound is null
// when it lies beyond the counts the decoding covered, and Mean is null when it overflows.
type Projection struct {
	Generation int      `json:"generation"`
	Mean       *float64 `json:"mean"`
	P50        [2]*int  `json:"p50"`
	P90        [2]*int  `json:"p90"`
	PZero      float64  `json:"p_zero"`
	// Approximate is set when a bound lay beyond the counts the decoding covered and comes
	// from a gamma distribution with the generation's exact mean and variance.
	Approximate bool `json:"approximate"`
}

// SerialInterval is the fitted serial-interval distribution (interval-censored maximum likelihood; package timing).
type SerialInterval struct {
	N                 int                  `json:"n"`
	Negative          int                  `json:"negative"`
	NegativeTreatment string               `json:"negative_treatment"`
	Fixed             bool                 `json:"fixed"`
	BestModel         string               `json:"best_model"`
	Models            []SerialModel        `json:"models"`
	Quantiles         SerialQuantiles      `json:"quantiles"`
	MeanCI            [2]*float64          `json:"mean_ci"`
	Histogram         []SerialHistogramBin `json:"histogram"`
	Density           []CurvePoint         `json:"density"` // best model's density on a grid (x days, y density)
	// TruncationCorrected is set when the fit conditioned each link on the interval being at
	// most the days from its infector's onset to the analysis date (right truncation).
	TruncationCorrected bool `json:"truncation_corrected"`
	// DelayCorrected is set when that condition also required the infectee to be reported
	// by the analysis date, under the onset-to-report delay estimated for the nowcast.
	DelayCorrected bool `json:"delay_corrected"`
}

// SerialModel is one fitted serial-interval family.
type SerialModel struct {
	Name   string             `json:"name"`
	Mean   float64            `json:"mean"`
	SD     float64            `json:"sd"`
	Params map[string]float64 `json:"params"`
	LogLik float64            `json:"loglik"`
	AIC    float64            `json:"aic"`
}

// SerialQuantiles of the best (or fixed) serial-interval model, in days.
type SerialQuantiles struct {
	P50 float64 `json:"p50"`
	P95 float64 `json:"p95"`
	P99 float64 `json:"p99"`
}

// SerialHistogramBin counts observed intervals of Days days (negative ones included).
type SerialHistogramBin struct {
	Days  int `json:"days"`
	Count int `json:"count"`
}

// WeekR is the mean offspring of cases with onset in one ISO week. In a released view a week
// whose count is withheld has Cases, R and its bounds null.
type WeekR struct {
	WeekStart linelist.Day `json:"week_start"`
	Cases     *int         `json:"cases"`
	R         *float64     `json:"R"`
	Lower     *float64     `json:"lower"`
	Upper     *float64     `json:"upper"`
	Censored  bool         `json:"censored"`
}

// InferredLinks describes the infectors inferred for unlinked, non-imported cases
// (--infer-missing): how, how many, how stable, and what they changed.
type InferredLinks struct {
	Inferred    int `json:"inferred"`
	NoCandidate int `json:"no_candidate"`
	// Method is "augmentation" (data augmentation that keeps who spreads, the default) or
	// "wallinga-teunis" (timing alone).
	Method string `json:"method"`
	// Share is Inferred over the non-imported cases: the share whose infector is inferred.
	Share float64 `json:"share"`
	// Stability is the mean, over the inferred cases, of the share of completed trees that
	// give the case its most frequent infector (1: every tree agrees on every link).
	Stability *float64 `json:"stability"`
	// Outside is the mean number of cases per completed tree given an infector outside the
	// list (augmentation with --infer-ascertainment below 1 only).
	Outside float64 `json:"outside"`
	// BurnIn is the sweeps the augmentation discarded after its Wallinga–Teunis start, and
	// BurnInZ Geweke's z comparing the first 10% of the kept trace of k with its last 50%
	// (|z| > 3 is flagged in the notes).
	BurnIn  int      `json:"burn_in"`
	BurnInZ *float64 `json:"burn_in_z"`
	// RecordedR and RecordedK are the estimates from the recorded links alone, with the same
	// bootstrap, to set beside Offspring.R and Offspring.K.
	RecordedR Estimate `json:"recorded_r"`
	RecordedK Estimate `json:"recorded_k"`
	// Matters is true when the choice matters: the estimate of R or k with inferred links
	// lies outside the headline interval of the one without, or the reverse.
	Matters bool `json:"matters"`
}

// Forecast is the expected number of cases by ISO week of onset in the weeks after the
// analysis date, by simulating the fitted process forward from the report's cases (package
// forecast).
type Forecast struct {
	Weeks []ForecastWeek `json:"weeks"`
	// Simulations is how many runs the intervals rest on, Replicates how many bootstrap
	// replicates of R and k they mix over.
	Simulations int `json:"simulations"`
	Replicates  int `json:"replicates"`
	// Capped counts the runs stopped at the case budget; their weeks bound the truth from
	// below only, and an upper end that falls among them is null.
	Capped         int     `json:"capped"`
	ImportsPerWeek float64 `json:"imports_per_week"`
	// DelayCases counts the cases with an onset and a report date that gave the reporting
	// delay; below 20 none was used and every onset up to the analysis date is taken to be
	// listed.
	DelayCases int `json:"delay_cases"`
}

// ForecastWeek is one week's predictive distribution: the median and the central 50% and
// 90% prediction intervals of the cases with onset in it (null where unknown).
type ForecastWeek struct {
	WeekStart linelist.Day `json:"week_start"`
	Mean      *float64     `json:"mean"`
	Median    *int         `json:"median"`
	P50       [2]*int      `json:"p50"`
	P90       [2]*int      `json:"p90"`
}

// EndOfOutbreak is the probability that no further case follows, day by day
// [Nishiura, Miyamatsu & Mizumoto 2016].
type EndOfOutbreak struct {
	Curve   []DayProbability `json:"curve"`
	P95Date *linelist.Day    `json:"p95_date"`
	P99Date *linelist.Day    `json:"p99_date"`
	// P95Range is the interval of the day the chance reaches 95%, from the band of the
	// bootstrap replicates (its earliest day where the upper end reaches 95%, its latest
	// where the lower end does); an end is null when it lies beyond the curve.
	P95Range  [2]*linelist.Day `json:"p95_range"`
	LastOnset linelist.Day     `json:"last_onset"`
	// NotYet is the reason the curve cannot be read yet, empty when it can: while cases are
	// still being reported within the censoring window, the chance that none follows is
	// about a future the data have not reached.
	NotYet      string       `json:"not_yet,omitempty"`
	RuleOfThumb *RuleOfThumb `json:"rule_of_thumb,omitempty"`
}

// DayProbability is one point of the end-of-outbreak curve, with the central interval of
// the bootstrap replicates at the run's level (Lower, Upper; null where none was computed).
type DayProbability struct {
	Date        linelist.Day `json:"date"`
	Probability float64      `json:"probability"`
	Lower       *float64     `json:"lower"`
	Upper       *float64     `json:"upper"`
}

// RuleOfThumb is the declaration rule "twice the longest incubation period after the last
// case" (common practice), when the template's config gives the incubation period.
type RuleOfThumb struct {
	LongestIncubationDays int          `json:"longest_incubation_days"`
	Date                  linelist.Day `json:"date"`
}

// EpiCurve counts cases by ISO onset week, one series per setting. In a released view
// (Release) a withheld count is null, in Total and in Series alike.
type EpiCurve struct {
	Weeks  []linelist.Day `json:"weeks"`
	Total  []*int         `json:"total"`
	Series []Series       `json:"series"`
}

// Series is one named row of counts; a null count is withheld.
type Series struct {
	Name   string `json:"name"`
	Counts []*int `json:"counts"`
}

// Clusters describes transmission chains: the size distribution and the largest trees.
type Clusters struct {
	SizeHistogram []SizeCount `json:"size_histogram"`
	Largest       []TreeView  `json:"largest"`
	// NodesShown caps the nodes drawn per tree, so the report stays small and readable.
	NodesShown int `json:"nodes_shown"`
}

// SizeCount is the number of clusters of one size, with the chain-size model's expectation
// and how many of them are still growing (a case inside the censoring window).
type SizeCount struct {
	Size     int      `json:"size"`
	Count    int      `json:"count"`
	Censored int      `json:"censored"`
	Expected *float64 `json:"expected"`
}

// TreeView is one transmission tree, capped to Nodes; Hidden counts cases not drawn. Size is
// the whole chain, Local the cases in the report's scope.
type TreeView struct {
	Root   string       `json:"root"`
	Size   int          `json:"size"`
	Local  int          `json:"local"`
	Depth  int          `json:"depth"`
	Start  linelist.Day `json:"start"`
	Nodes  []TreeNode   `json:"nodes"`
	Hidden int          `json:"hidden"`
}

// TreeNode is one case in a drawn tree; Parent is the index of its infector in Nodes (−1 at
// the root).
type TreeNode struct {
	ID         string       `json:"id"`
	Parent     int          `json:"parent"`
	Generation int          `json:"generation"`
	Offspring  int          `json:"offspring"`
	Onset      linelist.Day `json:"onset"`
	Setting    string       `json:"setting,omitempty"`
	// Elsewhere marks a case outside the report's scope (another jurisdiction).
	Elsewhere bool `json:"elsewhere,omitempty"`
}

// AgeMixing counts infector → infectee links by age group (rows infector, columns
// infectee). In a released view a withheld cell is null.
type AgeMixing struct {
	Groups []string `json:"groups"`
	Counts [][]*int `json:"counts"`
	Links  int      `json:"links"`
}

// Stratum summarises one value of a descriptive column: its cases, and the mean offspring of
// the Counted cases outside the censoring window. In a released view a withheld count is
// null, Counted is null, and the mean is null unless Counted reached the threshold.
type Stratum struct {
	Column        string   `json:"column"`
	Value         string   `json:"value"`
	Cases         *int     `json:"cases"`
	Counted       *int     `json:"counted"`
	MeanOffspring *float64 `json:"mean_offspring"`
}

// Control is what control measures would do to the fitted offspring model [Lloyd-Smith et
// al. 2005, Nature 438:355]: for each strategy and each effort c of Efforts, the effective
// reproduction number and the probability that one new introduction dies out, with
// bootstrap intervals over the offspring fit's replicates, and the effort that brings R to 1.
type Control struct {
	// Model is the offspring model the scenarios rest on.
	Model string `json:"model"`
	// AboveOne is whether the fitted R, with no control, is above 1: otherwise every chain
	// dies out already and every threshold is 0.
	AboveOne bool `json:"above_one"`
	// Efforts are the control efforts c, from 0 (no control) to 1.
	Efforts []float64 `json:"efforts"`
	// Strategies are "population" (every case's individual R scaled by 1 − c),
	// "individual" (a share c of cases, chosen at random, prevented from transmitting) and
	// "targeted" (the share c of cases with the largest individual R prevented), in that order.
	Strategies []ControlStrategy `json:"strategies"`
	// Replicates is the number of the offspring bootstrap's replicates behind the intervals
	// (the first ones, at most 500).
	Replicates int `json:"replicates"`
}

// ControlStrategy is one strategy's curve. R[i] and Extinction[i] belong to Efforts[i].
type ControlStrategy struct {
	Name       string     `json:"name"`
	R          []Estimate `json:"R"`
	Extinction []Estimate `json:"extinction_probability"`
	// Threshold is the smallest effort with R at most 1 (0 when R is already at most 1):
	// 1 − 1/R for the population and individual strategies.
	Threshold Estimate `json:"threshold"`
}

// Multitype is the branching-process outlook by age group: a multitype process whose
// next-generation matrix comes from who infected whom [Diekmann, Heesterbeek & Metz 1990;
// Harris 1963, ch. II]. Its types are the age groups after pooling (PoolRule); cases with
// no recorded age group are left out.
type Multitype struct {
	// Groups names the types in age order; a pooled type joins its age groups with " + ".
	Groups []string `json:"groups"`
	// MinCases is the pooling threshold: a type rests on at least this many cases.
	MinCases int `json:"min_cases"`
	// PoolRule says in words how sparse age groups were pooled.
	PoolRule string `json:"pool_rule"`
	// Pooled is true when at least one age group was pooled with another.
	Pooled bool `json:"pooled"`
	// Matrix[i][j] is the mean number of cases of type j infected by one case of type i, over
	// the cases outside the censoring window (the single-type fit's rule).
	Matrix [][]float64 `json:"matrix"`
	// K[i] is the negative-binomial dispersion fitted to type i's offspring counts, null in
	// the Poisson limit.
	K []*float64 `json:"k"`
	// R is the spectral radius of Matrix, with percentile intervals from a bootstrap that
	// resamples cases within each type (no BCa interval).
	R Estimate `json:"R"`
	// Replicates is the number of bootstrap replicates behind R's interval.
	Replicates int `json:"replicates"`
	// Extinction[i] is the probability that the chain started by one new case of type i
	// dies out.
	Extinction []float64 `json:"extinction_probability"`
	// Start is what the generation shares start from: "active" (the cases inside the
	// censoring window, still able to transmit) or "all" (every case with an age group,
	// when none is active).
	Start string `json:"start"`
	// GenerationShares[g][j] is the expected share of type j among the cases of generation
	// g + 1 from Start; a row is null when no case is expected.
	GenerationShares [][]float64 `json:"generation_shares"`
	// StableShares is the share of each type in the late generations of a growing outbreak
	// (the left Perron eigenvector of Matrix), null when Matrix has no positive eigenvalue.
	StableShares []float64 `json:"stable_shares"`
	// UnknownAge counts the cases outside the censoring window left out for having no age
	// group; UnknownInfectees the infectees of the counted cases with no age group, who
	// count toward their infector's row, shared among the types as its other infectees are.
	// In a released view each is null below the threshold.
	UnknownAge       *int `json:"unknown_age"`
	UnknownInfectees *int `json:"unknown_infectees"`
}

// SinceLast is what changed between the archive's latest earlier run of the jurisdiction
// (analysis date Previous) and this one. New cases are those of this export whose identifier
// the earlier export did not have: by onset after Previous (NewByOnset) or on or before it
// (Revisions.Late), and by report date after Previous (NewByReport). In a released view each
// count is null from 1 to the threshold − 1, with the complementary suppression of
// releaseSinceLast.
type SinceLast struct {
	Previous        linelist.Day `json:"previous"`
	PreviousVersion string       `json:"previous_version"`
	NewByOnset      *int         `json:"new_by_onset"`
	NewByReport     *int         `json:"new_by_report"`
	Revisions       Revisions    `json:"revisions"`
	// Changes are R, k, the recent R and the probability that the current chains die out,
	// now and then.
	Changes []Change `json:"changes"`
	// IDs are the identifiers behind each revision (a removed case by its hashed identifier,
	// since the archive keeps no other); the full summary only, a released view drops them.
	IDs *RevisionIDs `json:"ids,omitempty"`
}

// Revisions counts the earlier export's cases revised in this one: cases new with an onset
// on or before the earlier analysis date (Late), cases no longer listed (Removed), onset
// dates changed, and links of cases in both exports added (no infector then), removed (none
// now) or moved (another infector).
type Revisions struct {
	Late         *int `json:"late"`
	Removed      *int `json:"removed"`
	OnsetChanged *int `json:"onset_changed"`
	LinksAdded   *int `json:"links_added"`
	LinksRemoved *int `json:"links_removed"`
	LinksMoved   *int `json:"links_moved"`
}

// RevisionIDs lists the identifiers behind each count of Revisions, sorted.
type RevisionIDs struct {
	Late         []string `json:"late"`
	Removed      []string `json:"removed"`
	OnsetChanged []string `json:"onset_changed"`
	LinksAdded   []string `json:"links_added"`
	LinksRemoved []string `json:"links_removed"`
	LinksMoved   []string `json:"links_moved"`
}

// Change is one estimate now and at the earlier run, each with its headline interval, and
// whether the change exceeds the uncertainty (ChangeBeyondUncertainty).
type Change struct {
	Name   string `json:"name"` // "R", "k", "recent_R" or "die_out"
	Now    Span   `json:"now"`
	Then   Span   `json:"then"`
	Beyond bool   `json:"beyond"`
}

// Span is an estimate with the bounds of its headline interval (null where unknown).
type Span struct {
	Estimate *float64 `json:"estimate"`
	Lower    *float64 `json:"lower"`
	Upper    *float64 `json:"upper"`
}

// TrendPoint is one run's key estimates: R, k, the recent R (the latest week's R of
// TimeVarying not censored), the probability that the current chains die out, and the
// forecast for the first week after the analysis date (median and 90% interval).
type TrendPoint struct {
	AsOf     linelist.Day `json:"as_of"`
	Cases    int          `json:"cases"`
	R        Span         `json:"R"`
	K        Span         `json:"k"`
	RecentR  Span         `json:"recent_R"`
	DieOut   Span         `json:"die_out"`
	NextWeek *Span        `json:"next_week"`
}

// ForecastCheck is each archived forecast for a week that has passed, against the cases
// with onset in that week in this export, and the score over all of them.
type ForecastCheck struct {
	Weeks []CheckedWeek `json:"weeks"`
	// Scored counts the weeks with an observed count; Within50 and Within90 how many of
	// them fell in the forecast's 50% and 90% intervals; MeanWIS is their mean weighted
	// interval score (WeightedIntervalScore).
	Scored   int      `json:"scored"`
	Within50 int      `json:"within_50"`
	Within90 int      `json:"within_90"`
	MeanWIS  *float64 `json:"mean_wis"`
}

// CheckedWeek is one archived forecast week: the run that made it, the week, the forecast
// and the cases observed (null in a released view where the epidemic curve withholds it).
type CheckedWeek struct {
	Made      linelist.Day `json:"made"`
	WeekStart linelist.Day `json:"week_start"`
	Median    *int         `json:"median"`
	P50       [2]*int      `json:"p50"`
	P90       [2]*int      `json:"p90"`
	Observed  *int         `json:"observed"`
	Within50  bool         `json:"within_50"`
	Within90  bool         `json:"within_90"`
	WIS       *float64     `json:"wis"`
}

// Backfill is each onset week's count as each archived report of the jurisdiction knew it,
// and as this run knows it (last): a week whose count grows from report to report had cases
// reported late.
type Backfill struct {
	Weeks   []linelist.Day   `json:"weeks"`
	Reports []BackfillReport `json:"reports"`
}

// BackfillReport is one report's count for each week of Backfill.Weeks (Counts[i] for
// Weeks[i]), from its epidemic curve: null where its released curve withholds the count,
// where the week had not begun by its analysis date, or where it has no curve.
type BackfillReport struct {
	AsOf   linelist.Day `json:"as_of"`
	Counts []*int       `json:"counts"`
}
