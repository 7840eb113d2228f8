package validate

import (
	"fmt"
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/monitor"
)

// Schema names the layout of audit.json.
const Schema = "riskaudit.audit/1"

// Caution is the statement every audit carries.
const Caution = "This audit is statistical evidence about the model's performance on the cohorts named here. " +
	"It is not a clinical decision: whether to keep, recalibrate, update or withdraw the model belongs to the " +
	"organisation's clinical governance, under the local regulation that applies to clinical software."

// InputFile is one input of the audit with its SHA-256. An input read
// by a database query has the query's name as Path, the SHA-256 of its
// rows (cohort.QueryInfo.RowsSHA256) and the query's description.
type InputFile struct {
	Role string `json:"role"`
	Path string `json:"path"`
	// Sheet is the worksheet read, when the file is an Excel workbook.
	Sheet  string `json:"sheet,omitempty"`
	SHA256 string `json:"sha256"`
	// Query describes the database query the data were read by, or is
	// nil for a file.
	Query *cohort.QueryInfo `json:"query,omitempty"`
	// Cluster is the cluster whose rows the file holds, for a cohort
	// given as cluster files (role "cluster file"); empty otherwise.
	Cluster string `json:"cluster,omitempty"`
}

// FileText is the input as the report names it: the file, and the
// worksheet of a workbook.
func (in InputFile) FileText() string {
	if in.Sheet == "" {
		return in.Path
	}
	return in.Path + ", sheet " + in.Sheet
}

// Provenance records how the audit (or comparison) was made: by which
// tool, from which command line and plan, when, for which date, on
// which files, with which columns renamed.
type Provenance struct {
	Tool string `json:"tool"`
	// CommandLine is the command as run, with any password masked
	// (package internal/redact).
	CommandLine string `json:"command_line"`
	StartedAt   string `json:"started_at"`
	// AuditDate is the date the audited cohort describes (YYYY-MM-DD),
	// and AuditDateSource where it came from: one of the DateFrom…
	// constants.
	AuditDate       string `json:"audit_date"`
	AuditDateSource string `json:"audit_date_source"`
	// Plan is the audit plan the run was made from, or nil.
	Plan *PlanFile `json:"plan"`
	// Renames are the column renames asked for (none: empty), each with
	// the files it was applied to.
	Renames []Rename    `json:"renames"`
	Inputs  []InputFile `json:"inputs"`
}

// Where an audit date came from (Provenance.AuditDateSource).
const (
	// DateFromFlag is a date given by --audit-date.
	DateFromFlag = "flag"
	// DateFromPlan is the plan's audit_date.
	DateFromPlan = "plan"
	// DateToday is the day the run started (UTC, or SOURCE_DATE_EPOCH's).
	DateToday = "today"
	// DateFromConfig is a date a Go caller set in the Config.
	DateFromConfig = "config"
)

// PlanFile is the audit plan a run was made from.
type PlanFile struct {
	Path string `json:"path"`
	// Name is the plan's name key ("" when it has none).
	Name   string `json:"name"`
	SHA256 string `json:"sha256"`
}

// Rename is one column rename asked for: the column From of the files
// read as To.
type Rename struct {
	From string `json:"from"`
	To   string `json:"to"`
	// Source is "flag" (--rename), "plan" (the plan's rename) or
	// "config" (a Go caller's Config).
	Source string `json:"source"`
	// AppliedTo lists the roles of the files that had a column From
	// ("cohort", "development"); empty when none had it.
	AppliedTo []string `json:"applied_to"`
}

// OutputFile is a file the run wrote, with its SHA-256.
type OutputFile struct {
	// Path is the file's path as written: inside an audit folder, the
	// folder joined with the file's name.
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
}

// Purpose is the audited model's stated purpose: the spec's purpose
// section, each field that the audit plan's purpose gives replacing the
// spec's.
type Purpose struct {
	IntendedUse       string `json:"intended_use,omitempty"`
	TargetPopulation  string `json:"target_population,omitempty"`
	Setting           string `json:"setting,omitempty"`
	OutcomeDefinition string `json:"outcome_definition,omitempty"`
	PredictionHorizon string `json:"prediction_horizon,omitempty"`
	// From says, for each field stated, where it came from: "model" (the
	// spec) or "plan".
	From map[string]string `json:"from"`
	// Missing lists the fields neither states, by key.
	Missing []string `json:"missing"`
	// ReplacedFromModel holds the spec's own text of each field the plan
	// replaced with a different one.
	ReplacedFromModel map[string]string `json:"replaced_from_model,omitempty"`
}

// NewPurpose combines the spec's purpose with the plan's: each field the
// plan states replaces the spec's.
func NewPurpose(spec, plan model.Purpose) *Purpose {
	out := &Purpose{From: map[string]string{}, Missing: []string{}}
	var merged model.Purpose
	for _, k := range model.PurposeKeys {
		sv, pv := spec.Get(k), plan.Get(k)
		switch {
		case pv != "":
			merged.Set(k, pv)
			out.From[k] = "plan"
			if sv != "" && sv != pv {
				if out.ReplacedFromModel == nil {
					out.ReplacedFromModel = map[string]string{}
				}
				out.ReplacedFromModel[k] = sv
			}
		case sv != "":
			merged.Set(k, sv)
			out.From[k] = "model"
		default:
			out.Missing = append(out.Missing, k)
		}
	}
	out.IntendedUse, out.TargetPopulation, out.Setting = merged.IntendedUse, merged.TargetPopulation, merged.Setting
	out.OutcomeDefinition, out.PredictionHorizon = merged.OutcomeDefinition, merged.PredictionHorizon
	return out
}

// Get returns the stated field of key, one of model.PurposeKeys.
func (p *Purpose) Get(key string) string {
	return model.Purpose{IntendedUse: p.IntendedUse, TargetPopulation: p.TargetPopulation, Setting: p.Setting,
		OutcomeDefinition: p.OutcomeDefinition, PredictionHorizon: p.PredictionHorizon}.Get(key)
}

// ModelInfo describes what was audited.
type ModelInfo struct {
	Name string `json:"name"`
	// Source is "frozen model" or "predicted risks".
	Source string `json:"source"`
	// Spec is the frozen model's file; Column the column of predicted
	// risks.
	Spec   string `json:"spec,omitempty"`
	Column string `json:"predicted_column,omitempty"`
	// PredictedPercent says that Column holds risks in percent (0 to
	// 100), each divided by 100 before it was measured.
	PredictedPercent bool     `json:"predicted_percent,omitempty"`
	Terms            []string `json:"terms,omitempty"`
	Outcome          string   `json:"outcome"`
	Event            string   `json:"event"`
	// CohortOutcome is how the cohort coded the model's outcome when the
	// audit was told that it codes it otherwise (audit --outcome, --event,
	// --non-event with --model); nil when the cohort uses the model's
	// own codes, Outcome and Event.
	CohortOutcome *CohortOutcome `json:"cohort_outcome,omitempty"`
	// Purpose is the model's stated purpose, with the fields not stated.
	Purpose *Purpose `json:"purpose"`
	// FittedModel is the frozen model that the audit fitted from the
	// recipe given and wrote into the audit folder: the model audited.
	FittedModel *OutputFile `json:"fitted_model,omitempty"`
	// ParentSHA256 is the SHA-256 of the model this one updates, from
	// the frozen model's provenance (parent_model_sha256), when it
	// updates one.
	ParentSHA256 string `json:"parent_sha256,omitempty"`
}

// CohortOutcome is the cohort's own coding of a frozen model's outcome:
// the column read and the values taken as event and non-event (NonEvent
// empty: every value but the event), beside the model's own column,
// event and non-event (ModelNonEvent empty when the model names none).
type CohortOutcome struct {
	Column        string `json:"column"`
	Event         string `json:"event"`
	NonEvent      string `json:"non_event,omitempty"`
	ModelColumn   string `json:"model_column"`
	ModelEvent    string `json:"model_event"`
	ModelNonEvent string `json:"model_non_event,omitempty"`
}

// Apparent is the model's performance on its development data, in the
// keys the internal-validation report also uses.
type Apparent struct {
	AUC         float64 `json:"auc"`
	Slope       float64 `json:"slope"`
	CITL        float64 `json:"citl"`
	Brier       float64 `json:"brier"`
	ScaledBrier float64 `json:"scaled_brier"`
	OE          float64 `json:"oe"`
	ICI         float64 `json:"ici"`
}

// Development is the model's performance on the development data, and
// its fit when the audit fitted it.
type Development struct {
	File string `json:"file"`
	// Fitted reports that the frozen model was fitted to this file (its
	// provenance names the file's SHA-256), so the measures are apparent
	// performance.
	Fitted   bool         `json:"model_fitted_to_this_data"`
	Apparent Apparent     `json:"apparent"`
	Measures *Performance `json:"measures"`
	// Fit is the fit of the recipe on these data (the fit --json object)
	// when the audit fitted it.
	Fit *model.FitReport `json:"fit,omitempty"`
}

// Corrected is one measure's apparent value, its bootstrap optimism and
// the corrected value apparent − optimism.
type Corrected struct {
	Apparent  float64 `json:"apparent"`
	Optimism  float64 `json:"optimism"`
	Corrected float64 `json:"corrected"`
}

// InternalMetrics are the optimism-corrected measures.
type InternalMetrics struct {
	AUC         Corrected `json:"auc"`
	Slope       Corrected `json:"slope"`
	CITL        Corrected `json:"citl"`
	Brier       Corrected `json:"brier"`
	ScaledBrier Corrected `json:"scaled_brier"`
	R2          Corrected `json:"nagelkerke_r2"`
	ICI         Corrected `json:"ici"`
}

// Internal is the internal validation by the optimism-corrected
// bootstrap.
type Internal struct {
	Bootstrap int             `json:"bootstrap"`
	Seed      uint64          `json:"seed"`
	Failed    int             `json:"failed"`
	Reasons   map[string]int  `json:"failed_by_reason,omitempty"`
	Metrics   InternalMetrics `json:"metrics"`
	// Shrinkage is the uniform shrinkage factor: the corrected
	// calibration slope (Van Houwelingen & le Cessie 1990).
	Shrinkage float64 `json:"shrinkage_factor"`
	// Refitted says that a frozen model's terms were refitted as a recipe
	// for the bootstrap.
	Refitted bool `json:"frozen_terms_refitted"`
	// ICIDelta is the LOWESS δ share of the ICI inside the bootstrap.
	ICIDelta float64 `json:"ici_delta_share"`
	// Warning is set when more than 10% of the replicates failed.
	Warning string `json:"warning,omitempty"`
	// ShrunkenModel names the shrunken frozen model written, if any.
	ShrunkenModel string `json:"shrunken_model,omitempty"`
}

// PercentileCIs are bootstrap percentile intervals, on the audited
// cohort, for the measures without an analytic interval.
type PercentileCIs struct {
	Replicates  int           `json:"replicates"`
	Seed        uint64        `json:"seed"`
	ICIDelta    float64       `json:"ici_delta_share"`
	ICI         [2]float64    `json:"ici"`
	E50         [2]float64    `json:"e50"`
	E90         [2]float64    `json:"e90"`
	ScaledBrier [2]float64    `json:"scaled_brier"`
	NetBenefit  []ThresholdCI `json:"net_benefit"`
	// NetBenefitGain is, per threshold, the interval of the model's gain
	// over the better default strategy (metrics.NetBenefit.Gain).
	NetBenefitGain []ThresholdCI `json:"net_benefit_gain"`
}

// ThresholdCI is an interval at one risk threshold.
type ThresholdCI struct {
	Threshold float64    `json:"threshold"`
	CI        [2]float64 `json:"ci"`
}

// Finding is one plain-language statement of the summary.
type Finding struct {
	Area string `json:"area"`
	Text string `json:"text"`
}

// Audit is the whole result, written as audit.json and rendered as the
// report. The keys of Performance appear at the top level.
type Audit struct {
	Schema string `json:"schema"`
	// Verdict is the outcome of the acceptance criteria.
	Verdict    *Verdict   `json:"verdict,omitempty"`
	Model      ModelInfo  `json:"model"`
	Provenance Provenance `json:"provenance"`
	Performance
	Development *Development `json:"development,omitempty"`
	Internal    *Internal    `json:"internal,omitempty"`
	// SampleSize says what sample size each precision criterion needs,
	// beside the cohort's.
	SampleSize *SampleSize `json:"sample_size,omitempty"`
	// CaseMix compares the development data with the cohort.
	CaseMix *CaseMix `json:"case_mix,omitempty"`
	// Update is the model updating on the cohort, when asked.
	Update *Update `json:"update,omitempty"`
	// Subgroups holds the measures by patient subgroup when asked.
	Subgroups []Subgroup `json:"subgroups,omitempty"`
	// MinSubgroupEvents is the fewest events a subgroup was measured with.
	MinSubgroupEvents int `json:"min_subgroup_events,omitempty"`
	// SubgroupBands say how each numeric subgroup column was banded.
	SubgroupBands []BandInfo `json:"subgroup_bands,omitempty"`
	// Clusters is the validation across clusters when asked.
	Clusters *Clusters `json:"clusters,omitempty"`
	// Imputation is the pooling across multiply imputed datasets, when
	// the cohort came as such (imputed.go).
	Imputation *Imputation `json:"imputation,omitempty"`
	// BootstrapCI holds percentile intervals on the cohort when asked.
	BootstrapCI *PercentileCIs `json:"bootstrap_ci,omitempty"`
	// OverTime is the cohort charted in date order (audit --date-column).
	OverTime *monitor.Summary `json:"over_time,omitempty"`
	// LateDates counts the patients of the cohort in date order dated
	// after the audit date, or after the day the audit ran when that is
	// earlier; nil when there are none.
	LateDates *LateDates `json:"late_dates,omitempty"`
	// OutOfRange lists the audited cohort's predictor values beyond the
	// model's development range, or that look like missing-value codes
	// (empty: none).
	OutOfRange []OutOfRange `json:"out_of_range,omitempty"`
	// CohortIsDevelopment says that no new cohort was given, so the
	// measures at the top level are those of the development data.
	CohortIsDevelopment bool      `json:"cohort_is_development,omitempty"`
	Summary             []Finding `json:"summary"`
	Caution             string    `json:"caution"`
	// Outputs are the files of the audit folder (names relative to it,
	// audit.json included), filled in when the folder is written.
	Outputs []string `json:"outputs,omitempty"`
	// Figures lists the figure files written beside audit.json, each as
	// SVG (linked by the report) and as PNG at print resolution.
	Figures []FigureFiles `json:"figures,omitempty"`
}

// LateDates are the patients dated after the audit date, or after the
// day the audit ran when that is earlier.
type LateDates struct {
	// Patients is how many; After the date they are after, and
	// AfterRunDate whether that is the day the audit ran (earlier than
	// the audit date) rather than the audit date.
	Patients     int    `json:"patients"`
	After        string `json:"after"`
	AfterRunDate bool   `json:"after_run_date"`
	// RunDate is the day the audit ran (UTC), and InFuture how many of
	// the patients are dated after it.
	RunDate  string `json:"run_date"`
	InFuture int    `json:"in_future"`
	// File, Line and Value are the first such row's file, line and date
	// as written, in file order.
	File  string `json:"file"`
	Line  int    `json:"line"`
	Value string `json:"value"`
}

// NewAudit assembles an audit from the new cohort's performance and,
// when dev is not nil, the development data's.
func NewAudit(m ModelInfo, prov Provenance, perf *Performance, dev *Performance, devFile string) *Audit {
	a := &Audit{Schema: Schema, Model: m, Provenance: prov, Performance: *perf, Caution: Caution}
	if dev != nil {
		a.Development = &Development{File: devFile, Measures: dev, Apparent: ApparentOf(dev)}
	}
	a.Summary = Findings(perf, dev)
	return a
}

// SetInternal adds the internal validation and its finding.
func (a *Audit) SetInternal(in *Internal) {
	a.Internal = in
	m := in.Metrics
	var text string
	if !finite(m.AUC.Apparent) || !finite(m.AUC.Corrected) || !finite(in.Shrinkage) {
		text = fmt.Sprintf("The optimism of the apparent AUC and calibration slope could not be estimated from the %d bootstrap replicates that fitted (of %d).",
			in.Bootstrap-in.Failed, in.Bootstrap)
	} else {
		text = fmt.Sprintf("By %d bootstrap replicates the apparent AUC %.3f shrinks to %.3f once corrected for optimism; the calibration slope expected in new patients from the same population (the shrinkage factor) is %.3f.",
			in.Bootstrap-in.Failed, m.AUC.Apparent, m.AUC.Corrected, in.Shrinkage)
	}
	if in.Shrinkage < 0.9 {
		text += " A factor below 0.9 means the model is noticeably overfitted: its risks will be too extreme in new patients."
	}
	if in.Warning != "" {
		text += " " + in.Warning
	}
	a.Summary = append(a.Summary, Finding{"internal validation", text})
}

// ApparentOf picks the measures of a performance that the development
// summary reports.
func ApparentOf(p *Performance) Apparent {
	return Apparent{AUC: p.Discrimination.AUC, Slope: p.Calibration.Slope, CITL: p.Calibration.CITL,
		Brier: p.Overall.Brier, ScaledBrier: p.Overall.ScaledBrier, OE: p.Calibration.OE, ICI: p.Calibration.ICI}
}

// Findings states what the measures mean, one plain sentence per area.
// The wording for the AUC follows the common rule of thumb of Hosmer,
// Lemeshow & Sturdivant (Applied Logistic Regression, 3rd ed., 2013,
// §5.2.4; recalled from memory): below 0.7 poor, 0.7–0.8 acceptable,
// 0.8–0.9 excellent, 0.9 and above outstanding. A measure or interval
// that could not be estimated is said to be so, with the reason, never
// written as a number.
func Findings(p *Performance, dev *Performance) []Finding {
	var out []Finding
	d := p.Discrimination
	tied := p.Cohort.MinRisk == p.Cohort.MaxRisk && p.Cohort.Used > 0
	var text string
	switch {
	case math.IsNaN(d.AUC):
		text = "The AUC could not be estimated: it needs patients with and without the event."
	case tied:
		text = fmt.Sprintf("AUC %.3f (95%% CI %s): every patient was given the same predicted risk, so the model does not tell patients with the event from those without.",
			d.AUC, ciText(d.CI, "%.3f", p.AUCCIReason()))
	default:
		text = fmt.Sprintf("AUC %.3f (95%% CI %s), %s discrimination: in about %d of 100 pairs of one patient with the event and one without, the patient with the event was given the higher risk.",
			d.AUC, ciText(d.CI, "%.3f", p.AUCCIReason()), aucWord(d.AUC), int(math.Round(100*d.AUC)))
	}
	if dev != nil && !math.IsNaN(dev.Discrimination.AUC) {
		text += fmt.Sprintf(" In the development data it was %.3f.", dev.Discrimination.AUC)
	}
	out = append(out, Finding{"discrimination", text})
	c := p.Calibration
	out = append(out, Finding{"calibration in the large", oeSentence(c)})
	out = append(out, Finding{"calibration slope", slopeSentence(c, tied)})
	out = append(out, Finding{"flexible calibration", flexibleSentence(c, p.Cohort, tied)})
	o := p.Overall
	if math.IsNaN(o.Brier) || math.IsNaN(o.ScaledBrier) || math.IsInf(o.ScaledBrier, 0) {
		out = append(out, Finding{"overall accuracy", "The Brier score could not be compared with that of giving every patient the observed event rate."})
	} else {
		out = append(out, Finding{"overall accuracy", fmt.Sprintf(
			"Brier score %.4f; scaled Brier %.3f: the model removes %s of the squared error of giving every patient the observed event rate.",
			o.Brier, o.ScaledBrier, percentWord(o.ScaledBrier))})
	}
	out = append(out, Finding{"clinical usefulness", netBenefitSentence(p)})
	return out
}

// ciText writes an interval's two ends in format, joined by "to", or
// "not estimable (why)" when either end is not a finite number.
func ciText(ci [2]float64, format, why string) string {
	if !finite(ci[0]) || !finite(ci[1]) {
		if why == "" {
			return "not estimable"
		}
		return "not estimable (" + why + ")"
	}
	return fmt.Sprintf(format+" to "+format, ci[0], ci[1])
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func aucWord(a float64) string {
	switch {
	case a >= 0.9:
		return "outstanding"
	case a >= 0.8:
		return "excellent"
	case a >= 0.7:
		return "acceptable"
	}
	return "poor"
}

func oeSentence(c Calibration) string {
	if !finite(c.OE) {
		return fmt.Sprintf("Observed events were %.0f against %.1f predicted: O/E could not be estimated.", c.Observed, c.Expected)
	}
	citl := "calibration-in-the-large could not be estimated"
	if finite(c.CITL) {
		citl = fmt.Sprintf("calibration-in-the-large %.3f, CI %s", c.CITL, ciText(c.CITLCI, "%.3f", ""))
	}
	s := fmt.Sprintf("Observed events were %.0f against %.1f predicted (O/E %.3f, 95%% CI %s; %s)",
		c.Observed, c.Expected, c.OE, ciText(c.OECI, "%.3f", ""), citl)
	switch {
	case !finite(c.OECI[0]) || !finite(c.OECI[1]):
		return s + "."
	case c.OECI[0] > 1:
		return s + fmt.Sprintf(": the model under-predicts risk; events happened %s more often than it predicted.", fractionWord(c.OE-1))
	case c.OECI[1] < 1:
		return s + fmt.Sprintf(": the model over-predicts risk; events happened %s less often than it predicted.", fractionWord(1-c.OE))
	}
	return s + ": consistent with the model predicting the right number of events overall."
}

func slopeSentence(c Calibration, tied bool) string {
	switch {
	case tied && !finite(c.Slope):
		return "The calibration slope could not be estimated: every patient was given the same predicted risk, so there is no spread of risk to judge."
	case !finite(c.Slope):
		return "The calibration slope could not be estimated on this cohort (for example, the risks separate the events from the non-events completely, or the cohort is too small): the spread of the risks cannot be judged."
	}
	s := fmt.Sprintf("Calibration slope %.3f (95%% CI %s)", c.Slope, ciText(c.SlopeCI, "%.3f", ""))
	switch {
	case !finite(c.SlopeCI[0]) || !finite(c.SlopeCI[1]):
		return s + "."
	case c.SlopeCI[1] < 1:
		return s + ": the predicted risks are too extreme — high risks too high and low risks too low — as when a model is overfitted or its predictors matter less in this cohort."
	case c.SlopeCI[0] > 1:
		return s + ": the predicted risks are too moderate — they spread less than the observed risks — as when predictors matter more in this cohort."
	}
	return s + ": consistent with the ideal slope of 1, so the spread of the predicted risks fits the cohort."
}

func flexibleSentence(c Calibration, co CohortSummary, tied bool) string {
	switch {
	case !finite(c.ICI) || !finite(c.E50) || !finite(c.E90):
		return "The flexible calibration curve could not be estimated."
	case tied:
		return fmt.Sprintf("Every patient was given the same risk, %s; the smoothed observed risk is then the event rate, %s, so every patient's predicted risk is %.4f from it on the risk scale (ICI, E50, E90 and Emax alike).",
			percent(co.MinRisk), percent(co.EventRate), c.ICI)
	}
	return fmt.Sprintf("Across patients the predicted risk differs from the smoothed observed risk by %.4f on average on the risk scale (ICI; %.2f percentage points), by at most %.4f for half of them (E50) and %.4f for nine in ten (E90).",
		c.ICI, 100*c.ICI, c.E50, c.E90)
}

// thresholdText writes a decision threshold as the summary names it, a
// percentage to one decimal at most (5%, 12.5%).
func thresholdText(t float64) string { return fmt.Sprintf("%g%%", math.Round(t*1000)/10) }

func netBenefitSentence(p *Performance) string {
	var better []string
	for _, nb := range p.NetBenefit {
		if GainReaches(nb.Gain(), p.NetBenefitMinGain) {
			better = append(better, thresholdText(nb.Threshold))
		}
	}
	by := "by at least " + MinGainText(p.NetBenefitMinGain)
	if p.NetBenefitMinGain <= 0 {
		by = "by any margin"
	}
	switch {
	case len(better) == 0:
		return fmt.Sprintf("At none of the risk thresholds examined does acting on the model do more good than both treating everyone and treating no one, %s (net benefit, Vickers & Elkin 2006).", by)
	case len(better) == len(p.NetBenefit):
		return fmt.Sprintf("At every risk threshold examined (%s to %s) acting on the model gives a higher net benefit than both treating everyone and treating no one, %s (Vickers & Elkin 2006).", better[0], better[len(better)-1], by)
	}
	return fmt.Sprintf("Acting on the model gives a higher net benefit than both treating everyone and treating no one, %s, at the thresholds %s (Vickers & Elkin 2006); at the others it does not.", by, strings.Join(better, ", "))
}

// AddGainUncertainty adds to the summary's clinical-usefulness finding
// the thresholds where a gain is claimed (GainReaches) but its bootstrap
// percentile interval (BootstrapCI.NetBenefitGain) reaches down to zero
// or below, so that the summary never claims more than the intervals
// support. Without bootstrap intervals it does nothing.
func (a *Audit) AddGainUncertainty() {
	if a.BootstrapCI == nil {
		return
	}
	lower := map[float64]float64{}
	for _, g := range a.BootstrapCI.NetBenefitGain {
		lower[g.Threshold] = g.CI[0]
	}
	var unsure, sure []string
	for _, nb := range a.Performance.NetBenefit {
		lo, ok := lower[nb.Threshold]
		if !ok || !GainReaches(nb.Gain(), a.Performance.NetBenefitMinGain) {
			continue
		}
		t := thresholdText(nb.Threshold)
		if lo > 0 {
			sure = append(sure, t)
		} else {
			unsure = append(unsure, t)
		}
	}
	if len(unsure) == 0 && len(sure) == 0 {
		return
	}
	text := fmt.Sprintf(" The bootstrap's 95%% percentile interval of the gain (%d replicates) ", a.BootstrapCI.Replicates)
	switch {
	case len(unsure) == 0:
		text += "lies above zero at each of those thresholds."
	case len(sure) == 0:
		text += fmt.Sprintf("reaches zero or below at each of those thresholds (%s): the gain is uncertain.", strings.Join(unsure, ", "))
	default:
		text += fmt.Sprintf("lies above zero at %s, but reaches zero or below at %s, where the gain is uncertain.", strings.Join(sure, ", "), strings.Join(unsure, ", "))
	}
	for i := range a.Summary {
		if a.Summary[i].Area == "clinical usefulness" {
			a.Summary[i].Text += text
		}
	}
}

// GainReaches reports whether a net-benefit gain is a gain the summary
// claims: positive and at least min, allowing 1e-12 for the rounding of
// a difference of two net benefits (0.08 − 0.07 is 0.00999…98 in
// float64, and reaches a minimum of 0.01).
func GainReaches(gain, min float64) bool { return gain > 0 && gain >= min-1e-12 }

// MinGainText writes the smallest net-benefit gain the summary claims, as
// "1 net true positive per 1000 patients" for 0.001.
func MinGainText(min float64) string {
	if min <= 0 {
		return "any positive gain"
	}
	n := 1000 * min
	unit := "net true positives"
	if n == 1 {
		unit = "net true positive"
	}
	return fmt.Sprintf("%g %s per 1000 patients", n, unit)
}

// fractionWord says a positive share in words: "about a fifth" for 0.2,
// otherwise a rounded percentage.
func fractionWord(f float64) string {
	names := []struct {
		v    float64
		name string
	}{{0.1, "a tenth"}, {1.0 / 8, "an eighth"}, {1.0 / 6, "a sixth"}, {0.2, "a fifth"}, {0.25, "a quarter"},
		{1.0 / 3, "a third"}, {0.5, "a half"}}
	for _, n := range names {
		if math.Abs(f-n.v) <= 0.015 {
			return "about " + n.name
		}
	}
	return fmt.Sprintf("about %.0f%%", 100*f)
}

func percentWord(f float64) string {
	if f < 0 {
		return "none (it does worse than that)"
	}
	return fmt.Sprintf("%.1f%%", 100*f)
}

// Update records the updating of the model on the cohort by the closed
// testing procedure.
type Update struct {
	Alpha  float64      `json:"alpha"`
	Steps  []UpdateStep `json:"steps"`
	Tests  []UpdateTest `json:"tests"`
	Chosen string       `json:"chosen"`
	// ModelFile is where the updated frozen model was written.
	ModelFile string `json:"model_file"`
	// Parent is the frozen model that was updated, as a file that
	// exists: the model given, or the model the audit fitted from the
	// recipe given (in the audit folder). Its SHA-256 is the updated
	// model's provenance.parent_model_sha256.
	Parent ParentModel `json:"parent_model"`
	// Expected is the updated model's performance expected in new patients
	// of this cohort's population, by the optimism bootstrap of the
	// updating (absent when no update was chosen).
	Expected *InternalMetrics `json:"expected,omitempty"`
	// Bootstrap and Seed describe that bootstrap.
	Bootstrap int    `json:"bootstrap,omitempty"`
	Seed      uint64 `json:"seed,omitempty"`
	Failed    int    `json:"failed,omitempty"`
}

// ParentModel is the model an update started from.
type ParentModel struct {
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
	// FittedInAudit says that the parent is the model this audit fitted
	// from a recipe and wrote into its folder.
	FittedInAudit bool `json:"fitted_in_this_audit"`
}

// UpdateStep is one candidate update with its fit.
type UpdateStep struct {
	Method string  `json:"method"`
	Params int     `json:"parameters"`
	Neg2LL float64 `json:"neg2ll"`
	AIC    float64 `json:"aic"`
}

// UpdateTest is a likelihood-ratio test of a simpler update against the
// model revision.
type UpdateTest struct {
	Simpler  string  `json:"simpler"`
	LRChi2   float64 `json:"lr_chi2"`
	DF       int     `json:"df"`
	P        float64 `json:"p"`
	Rejected bool    `json:"rejected"`
}

// SampleSize compares the cohort's size with the minimum sample size of
// Riley et al. (2021), with the anticipated values taken from the cohort
// itself or from the audit plan, as Basis says. A criterion whose size
// cannot be computed (samplesize.Criterion.NotComputable) is listed with
// its reason and judges nothing.
type SampleSize struct {
	Criteria []SizeCriterion `json:"criteria"`
	// Required and Driver are the largest need among the criteria that
	// could be computed and its criterion; Required is nil when none
	// could.
	Required *int   `json:"required_n"`
	Driver   string `json:"driven_by"`
	Have     int    `json:"have_n"`
	// Short is true when the cohort falls short of a criterion that
	// could be computed, false when it meets every criterion, and nil
	// when it meets those that could be computed but some could not:
	// then whether it was large enough cannot be judged.
	Short *bool  `json:"short"`
	Basis string `json:"anticipated_from"`
	// FromOutcomes says that the anticipated calibration or C-statistic
	// is this cohort's, measured on its outcomes; a plan made before the
	// outcomes are known ('riskaudit samplesize') cannot use them, so it
	// anticipates other values and other needs for the same file.
	FromOutcomes bool `json:"anticipated_from_outcomes,omitempty"`
}

// SizeCriterion is one criterion's requirement. N, Events and Met are
// nil when the size cannot be computed, and NotComputable says why.
type SizeCriterion struct {
	Measure       string  `json:"measure"`
	Target        string  `json:"target"`
	SE            float64 `json:"target_se"`
	N             *int    `json:"n"`
	Events        *int    `json:"events"`
	Met           *bool   `json:"met"`
	NotComputable string  `json:"not_computable,omitempty"`
}

// DefaultMissingCaution is the share of rows left out for missing values
// above which the summary cautions that the complete-case analysis may
// be biased: 5%, a rule of thumb of common practice (a few percent of
// incomplete rows is usually taken to matter little; recalled from
// memory, not from a single published source).
const DefaultMissingCaution = 0.05

// AddLimitations appends to the summary what most limits its
// conclusions: a cohort smaller than a sample-size criterion asks
// (SampleSize must be set first), and rows left out of the complete-case
// analysis, with a caution when they exceed the share caution (0 means
// DefaultMissingCaution). It adds nothing when neither applies.
func (a *Audit) AddLimitations(caution float64) {
	if caution <= 0 {
		caution = DefaultMissingCaution
	}
	if s := sampleSizeSentence(a.SampleSize); s != "" {
		a.Summary = append(a.Summary, Finding{"sample size", s})
	}
	if s := missingSentence(a.Cohort, caution); s != "" {
		a.Summary = append(a.Summary, Finding{"missing data", s})
	}
}

func sampleSizeSentence(s *SampleSize) string {
	if s == nil {
		return ""
	}
	var short []string
	for _, c := range s.Criteria {
		if c.Met != nil && !*c.Met {
			short = append(short, fmt.Sprintf("the %s criterion (%s) needs %d patients", c.Measure, c.Target, *c.N))
		}
	}
	switch {
	case len(short) > 0:
		return fmt.Sprintf("The cohort is smaller than the precision criteria ask (Riley et al. 2021): %s, and %d were analysed. The intervals above are wider than the targets, so a miscalibration or a loss of discrimination may be missed, or overstated, by chance.",
			strings.Join(short, "; "), s.Have)
	case s.Short == nil:
		return fmt.Sprintf("Whether the cohort of %d patients is large enough could not be fully judged: some sample-size criteria could not be computed (see Sample size).", s.Have)
	}
	return ""
}

func missingSentence(c CohortSummary, caution float64) string {
	if c.Excluded == 0 || c.Rows == 0 {
		return ""
	}
	share := float64(c.Excluded) / float64(c.Rows)
	var cols []string
	for _, e := range c.ExcludedByColumn {
		cols = append(cols, fmt.Sprintf("%s %d", e.Column, e.Rows))
	}
	s := fmt.Sprintf("The analysis used complete cases: %d of %d rows (%.1f%%) were left out for a missing value (missing values by column: %s).",
		c.Excluded, c.Rows, 100*share, strings.Join(cols, ", "))
	if share > caution {
		s += fmt.Sprintf(" That is more than %g%% of the rows: unless the values are missing completely at random, the patients analysed may differ from the cohort and every measure may be biased. Multiple imputation of the missing predictors, with the outcome in the imputation model and the measures pooled across imputations by Rubin's rules, would use every patient and remove that bias when the values are missing at random given the data; it cannot when they are missing for reasons the data do not record.",
			100*caution)
	}
	return s
}

// FigureFiles names the files of one figure of an audit.
type FigureFiles struct {
	// Title is the figure's caption in the report.
	Title string `json:"title"`
	// SVG is the file the report links.
	SVG string `json:"svg"`
	// PNG is the same figure at print resolution (300 dots per inch).
	PNG string `json:"png"`
}
