package main

import (
	"fmt"
	"math"
	"regexp"
	"sort"
	"strings"
	"testing"
)

// This file extends the check of printed numbers (printed_test.go) from
// the tables to the prose of report.md: the summary's findings, the
// verdict line, the paragraphs around the tables and the bullets of the
// clusters and over-time sections. A sentence that states a measure is
// matched by a rule that names the audit.json values of its numbers, in
// order and at the printed precision; every number no rule claims must
// still be some value audit.json holds (or a stated constant of the
// method: the 95% level, z = 1.96 (1.959964, the 97.5% point), the per-1000 scale), and a number with
// no counterpart at all is reported. The rules are driven by the sentence
// and audit.json alone, not by the layout of one report, and a rule
// marked required must match whenever audit.json has its values, so that
// a reworded sentence fails here rather than going unchecked.

// numPat is the pattern of one printed number inside a rule: an optional
// "< ", a sign, digits with thousands separated by commas, decimals and
// a percent sign.
const numPat = `(?:< ?)?[-+]?(?:\d{1,3}(?:,\d{3})+|\d+)(?:\.\d+)?%?`

// proseRule is one kind of sentence: re, with # for each number, and
// want, the audit.json values of every number the match holds in order
// (the constants of the sentence included). need says when audit.json
// has what the sentence must state, so that the rule must match.
type proseRule struct {
	name string
	re   *regexp.Regexp
	want func(js jsonDoc, g map[string]string) []float64
	need func(js jsonDoc) bool
}

func rule(name, pattern string, want func(js jsonDoc, g map[string]string) []float64, need func(js jsonDoc) bool) proseRule {
	return proseRule{name: name, re: regexp.MustCompile(strings.ReplaceAll(pattern, "#", numPat)), want: want, need: need}
}

// has is a need: audit.json holds a number at path.
func has(path string) func(js jsonDoc) bool {
	return func(js jsonDoc) bool { return !math.IsNaN(js.num(path)) }
}

// nums gives the values at paths, in order.
func nums(js jsonDoc, paths ...string) []float64 {
	out := make([]float64, len(paths))
	for i, p := range paths {
		out[i] = js.num(p)
	}
	return out
}

func cat(parts ...[]float64) []float64 {
	var out []float64
	for _, p := range parts {
		out = append(out, p...)
	}
	return out
}

func one(v ...float64) []float64 { return v }

// verdictCounts are the criteria not met, the criteria, the subgroup
// checks not met and the subgroup checks, from audit.json.
func verdictCounts(js jsonDoc) (failed, total, missed, checks float64) {
	for i := 0; i < js.len("verdict.criteria"); i++ {
		total++
		if v, _ := js.get(fmt.Sprintf("verdict.criteria[%d].passed", i)); v != true {
			failed++
		}
	}
	for i := 0; i < js.len("verdict.subgroup_checks"); i++ {
		checks++
		if v, _ := js.get(fmt.Sprintf("verdict.subgroup_checks[%d].passed", i)); v != true {
			missed++
		}
	}
	return
}

// gainThresholds are the decision-curve thresholds whose gain over the
// better default, model − max(treat all, 0), reaches the minimum the
// summary claims (a positive gain of at least net_benefit_min_gain),
// split by whether the gain's bootstrap interval lies above zero.
func gainThresholds(js jsonDoc) (all, sure, unsure []float64) {
	min := js.num("net_benefit_min_gain")
	for i := 0; i < js.len("net_benefit"); i++ {
		p := fmt.Sprintf("net_benefit[%d].", i)
		g := js.num(p+"model") - math.Max(js.num(p+"treat_all"), 0)
		if !(g > 0 && g >= min-1e-12) {
			continue
		}
		t := js.num(p + "threshold")
		all = append(all, t)
		for j := 0; j < js.len("bootstrap_ci.net_benefit_gain"); j++ {
			q := fmt.Sprintf("bootstrap_ci.net_benefit_gain[%d].", j)
			if js.num(q+"threshold") == t {
				if js.num(q+"ci[0]") > 0 {
					sure = append(sure, t)
				} else {
					unsure = append(unsure, t)
				}
			}
		}
	}
	return
}

// clusterMeasure maps the name a clusters bullet gives a measure to its
// key in clusters.pooled.
var clusterMeasure = map[string]string{"The C-statistic": "auc", "O/E": "oe", "Calibration-in-the-large": "citl", "The calibration slope": "slope"}

// chartIndex finds the CUSUM chart of a name in over_time.cusum.
func chartIndex(js jsonDoc, name string) int {
	for i := 0; i < js.len("over_time.cusum"); i++ {
		if js.str(fmt.Sprintf("over_time.cusum[%d].name", i)) == name {
			return i
		}
	}
	return -1
}

func proseRules() []proseRule {
	dev := "development.measures."
	return append([]proseRule{
		// The verdict line and the subgroup counts.
		rule("verdict counts", `\(# of # criteria not met; # of # subgroup checks not met\)`, func(js jsonDoc, _ map[string]string) []float64 {
			f, t, m, c := verdictCounts(js)
			return one(f, t, m, c)
		}, nil),
		rule("verdict counts", `\(# of # criteria not met\)`, func(js jsonDoc, _ map[string]string) []float64 {
			f, t, _, _ := verdictCounts(js)
			return one(f, t)
		}, nil),
		rule("subgroup checks not met", `# of # subgroup checks (?:are )?not met(?:, in # subgroups)?`, func(js jsonDoc, g map[string]string) []float64 {
			_, _, m, c := verdictCounts(js)
			out := one(m, c)
			if strings.Contains(g[""], ", in ") {
				groups := map[string]bool{}
				for i := 0; i < js.len("verdict.subgroup_checks"); i++ {
					p := fmt.Sprintf("verdict.subgroup_checks[%d].", i)
					if v, _ := js.get(p + "passed"); v != true {
						groups[js.str(p+"column")+"="+js.str(p+"level")] = true
					}
				}
				out = append(out, float64(len(groups)))
			}
			return out
		}, nil),
		// The summary's findings (validate.Findings and the audit's own).
		rule("summary AUC", `AUC # \(#(?: CI)? # to #\), \w+ discrimination: in about # of # pairs`, func(js jsonDoc, _ map[string]string) []float64 {
			return cat(nums(js, "discrimination.auc"), one(0.95), nums(js, "discrimination.auc_ci[0]", "discrimination.auc_ci[1]"),
				one(math.Round(100*js.num("discrimination.auc")), 100))
		}, has("discrimination.auc_ci[0]")),
		rule("summary development AUC", `In the development data it was #\.`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, dev+"discrimination.auc")
		}, has(dev+"discrimination.auc")),
		rule("summary O/E", `Observed events were # against # predicted \(O/E #, # CI # to #; calibration-in-the-large #, CI # to #\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return cat(nums(js, "calibration.observed_events", "calibration.expected_events", "calibration.oe"), one(0.95),
				nums(js, "calibration.oe_ci[0]", "calibration.oe_ci[1]", "calibration.citl", "calibration.citl_ci[0]", "calibration.citl_ci[1]"))
		}, has("calibration.citl_ci[0]")),
		rule("summary O/E in words", `events happened about # (?P<dir>more|less) often`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(math.Abs(js.num("calibration.oe") - 1))
		}, nil),
		rule("summary slope", `Calibration slope # \(# CI # to #\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return cat(nums(js, "calibration.slope"), one(0.95), nums(js, "calibration.slope_ci[0]", "calibration.slope_ci[1]"))
		}, has("calibration.slope_ci[0]")),
		rule("summary flexible calibration", `by # on average on the risk scale \(ICI; # percentage points\), by at most # for half of them \(E50\) and # for nine in ten \(E90\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(js.num("calibration.ici"), 100*js.num("calibration.ici"), js.num("calibration.e50"), js.num("calibration.e90"))
		}, has("calibration.e90")),
		rule("summary Brier", `Brier score #; scaled Brier #: the model removes #`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "overall.brier", "overall.scaled_brier", "overall.scaled_brier")
		}, has("overall.scaled_brier")),
		rule("summary net benefit, every threshold", `At every risk threshold examined \(# to #\)`, func(js jsonDoc, _ map[string]string) []float64 {
			all, _, _ := gainThresholds(js)
			if len(all) == 0 {
				return nil
			}
			return one(all[0], all[len(all)-1])
		}, nil),
		rule("summary net benefit, some thresholds", `at the thresholds (?P<list>#(?:, #)*) \(`, func(js jsonDoc, _ map[string]string) []float64 {
			all, _, _ := gainThresholds(js)
			return all
		}, nil),
		rule("minimum gain", `by at least # net true positives? per # patients`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(1000*js.num("net_benefit_min_gain"), 1000)
		}, nil),
		rule("minimum gain", `reaches # net true positives? per # patients \(a gain of # in net benefit\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(1000*js.num("net_benefit_min_gain"), 1000, js.num("net_benefit_min_gain"))
		}, nil),
		rule("gain uncertainty", `The bootstrap's # percentile interval of the gain \(# replicates\) lies above zero at (?P<sure>#(?:, #)*), but reaches zero or below at (?P<unsure>#(?:, #)*), where`, func(js jsonDoc, _ map[string]string) []float64 {
			_, sure, unsure := gainThresholds(js)
			return cat(one(0.95, js.num("bootstrap_ci.replicates")), sure, unsure)
		}, nil),
		rule("gain uncertainty", `The bootstrap's # percentile interval of the gain \(# replicates\) reaches zero or below at each of those thresholds \((?P<unsure>#(?:, #)*)\)`, func(js jsonDoc, _ map[string]string) []float64 {
			_, _, unsure := gainThresholds(js)
			return cat(one(0.95, js.num("bootstrap_ci.replicates")), unsure)
		}, nil),
		rule("gain interval", `the #th to #th percentile of the gain`, func(js jsonDoc, _ map[string]string) []float64 { return one(2.5, 97.5) }, nil),
		rule("summary internal validation", `By # bootstrap replicates the apparent AUC # shrinks to # once corrected for optimism; the calibration slope expected in new patients from the same population \(the shrinkage factor\) is #`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(js.num("internal.bootstrap")-js.num("internal.failed"), js.num("internal.metrics.auc.apparent"),
				js.num("internal.metrics.auc.corrected"), js.num("internal.shrinkage_factor"))
		}, has("internal.shrinkage_factor")),
		rule("summary over time", `In date order \(# patients, ⟨date⟩ to ⟨date⟩\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "over_time.patients")
		}, has("over_time.patients")),
		rule("summary over time, signal", `the (?P<chart>\w+) chart signalled on ⟨date⟩, after # patients`, func(js jsonDoc, g map[string]string) []float64 {
			return one(js.num(fmt.Sprintf("over_time.cusum[%d].first_signal.patient", chartIndex(js, g["chart"]))))
		}, nil),
		rule("summary missing data", `# of # rows \(#\) were left out`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(js.num("cohort.excluded"), js.num("cohort.rows"), js.num("cohort.excluded")/js.num("cohort.rows"))
		}, nil),
		rule("late dates", `# (?:patient is|patients are) dated after (?:the day the audit ran|the audit date) \(⟨date⟩[^)]*\)(?:, in the future)?(?:, and the audit date \(⟨date⟩, [^)]*\) is later still)?: the first on line # of`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "late_dates.patients", "late_dates.line")
		}, has("late_dates.patients")),
		rule("late dates in the future", `# of them (?:is|are) dated after the day the audit ran \(⟨date⟩\), in the future`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "late_dates.in_future")
		}, nil),
		rule("missing share", `That is more than # of the rows`, func(js jsonDoc, _ map[string]string) []float64 { return one(0.05) }, nil),
		rule("missing by column", `missing values by column: (?P<list>[^)]*)\)`, func(js jsonDoc, _ map[string]string) []float64 {
			var out []float64
			for i := 0; i < js.len("cohort.excluded_by_column"); i++ {
				out = append(out, js.num(fmt.Sprintf("cohort.excluded_by_column[%d].rows", i)))
			}
			return out
		}, nil),
		rule("sample size", `the cohort's # patients fall short of the # the`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "sample_size.have_n", "sample_size.required_n")
		}, nil),
		rule("sample size", `and # were analysed`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "sample_size.have_n") }, nil),
		rule("sample size criterion", `the (?P<m>O/E|calibration slope|C-statistic|standardised net benefit at #) criterion \(# CI width #\) needs # patients`, func(js jsonDoc, g map[string]string) []float64 {
			for i := 0; i < js.len("sample_size.criteria"); i++ {
				p := fmt.Sprintf("sample_size.criteria[%d].", i)
				if js.str(p+"measure") == g["m"] {
					want := numbers(g["m"] + " " + js.str(p+"target"))
					var out []float64
					for _, w := range want {
						out = append(out, w.v/map[bool]float64{true: 100, false: 1}[w.pct])
					}
					return append(out, js.num(p+"n"))
				}
			}
			return nil
		}, nil),
		// Methods.
		rule("Hosmer–Lemeshow groups", `# groups of predicted risk, ties kept together, df = #`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "calibration.hosmer_lemeshow.groups", "calibration.hosmer_lemeshow.df")
		}, has("calibration.hosmer_lemeshow.df")),
		rule("LOWESS span", `LOWESS \(Cleveland 1979\), span #,`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "calibration.lowess_span") }, has("calibration.lowess_span")),
		rule("CUSUM limits", `for an in-control ARL of # patients: # sequences of patients drawn with replacement from this cohort's predicted risks, outcomes drawn from those risks, each followed for # × the ARL \(seed #\)`, func(js jsonDoc, _ map[string]string) []float64 {
			l := "over_time.cusum[0].limit."
			return nums(js, l+"target_arl", l+"runs", l+"horizon", l+"seed")
		}, has("over_time.cusum[0].limit.runs")),
		rule("EWMA method", `λ = #, with the exact variance V_t = \(# − λ\)²V_\{t−#\} \+ λ²p_t\(# − p_t\) and limits ±#·√V_t`, func(js jsonDoc, _ map[string]string) []float64 {
			return []float64{js.num("over_time.ewma.lambda"), 1, 1, 1, js.num("over_time.ewma.width")}
		}, has("over_time.ewma.lambda")),
		rule("standardised difference threshold", `Standardised differences \(Austin 2009\) of # or more in absolute value`, func(js jsonDoc, _ map[string]string) []float64 { return one(0.1) }, nil),
		// Calibration and internal validation paragraphs.
		rule("LOWESS settings", `\(span #, local linear, tricube weights, no robustness iterations, δ = #`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "calibration.lowess_span", "calibration.lowess_delta")
		}, has("calibration.lowess_span")),
		rule("LOWESS band", `Its band is pointwise #: smoothed ± #·√\(ŝ\(# − ŝ\)·Σl²\)`, func(js jsonDoc, _ map[string]string) []float64 { return one(0.95, 1.96, 1) }, has("calibration.lowess_span")),
		rule("bootstrap intervals", `Bootstrap percentile intervals from # resamples of the cohort \(seed #; the model fixed; the curve in each resample with δ = # of the risk range\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "bootstrap_ci.replicates", "bootstrap_ci.seed", "bootstrap_ci.ici_delta_share")
		}, has("bootstrap_ci.ici[0]")),
		rule("internal validation", `: # samples of the development rows drawn with replacement \(seed #\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "internal.bootstrap", "internal.seed")
		}, has("internal.bootstrap")),
		rule("internal validation failures", `# replicates? failed to fit`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "internal.failed") }, nil),
		rule("internal ICI delta", `measured with LOWESS δ = # of the risk range`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "internal.ici_delta_share") }, nil),
		rule("shrinkage", `The shrinkage factor # multiplies`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "internal.shrinkage_factor") }, nil),
		// Development data and case-mix.
		rule("development data", `\(# patients, # events\), beside this cohort`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, dev+"cohort.used", dev+"cohort.events")
		}, has(dev+"cohort.used")),
		rule("membership c", `apart with c = #`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "case_mix.membership_c") }, has("case_mix.membership_c")),
		rule("membership c", `its c-statistic, #,`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "case_mix.membership_c") }, nil),
		rule("linear predictor spread", `spread \(SD\) is # in the new cohort against # in development \(ratio #\), and its mean # against #`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(js.num("case_mix.lp_sd_new"), js.num("case_mix.lp_sd_development"), js.num("case_mix.lp_sd_new")/js.num("case_mix.lp_sd_development"),
				js.num("case_mix.lp_mean_new"), js.num("case_mix.lp_mean_development"))
		}, has("case_mix.lp_sd_new")),
		rule("AUC change", `The AUC changed by #`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(js.num("discrimination.auc") - js.num(dev+"discrimination.auc"))
		}, nil),
		// Model updating and fit.
		rule("update expected", `by # bootstrap replicates of the updating \(seed #, # failed\): AUC # \(apparent #\), calibration slope #, calibration-in-the-large #, Brier score #`, func(js jsonDoc, _ map[string]string) []float64 {
			e := "update.expected."
			return cat(nums(js, "update.bootstrap", "update.seed"), one(0), nums(js, e+"auc.corrected", e+"auc.apparent", e+"slope.corrected", e+"citl.corrected", e+"brier.corrected"))
		}, has("update.expected.auc.corrected")),
		rule("update alpha", `at α = #`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "update.alpha") }, has("update.alpha")),
		rule("fit steps", `by maximum likelihood \(# Newton steps\)`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "development.fit.iterations") }, nil),
		// Subgroups.
		rule("subgroup minimum", `fewer than # events or non-events is reported as too small`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "min_subgroup_events") }, has("min_subgroup_events")),
		rule("subgroup cuts", "(?P<col>[\\w.]+) is cut at (?P<list>#(?:, #)* and #)\\.", func(js jsonDoc, g map[string]string) []float64 {
			return bandCuts(js, g["col"])
		}, nil),
		rule("subgroup quantile cuts", "(?P<col>[\\w.]+) is cut at its \\w+ in the audited cohort, (?P<list>#(?:, #)* and #) \\(", func(js jsonDoc, g map[string]string) []float64 {
			return bandCuts(js, g["col"])
		}, nil),
		// Clusters.
		rule("clusters count", `measured in each of the # values of`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(float64(js.len("clusters.per_cluster")))
		}, has("clusters.pooled.auc.estimate")),
		rule("clusters minimum", `with fewer than # events or non-events is shown but not pooled`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "clusters.min_events") }, nil),
		rule("clusters pooled", `(?P<m>The C-statistic|O/E|Calibration-in-the-large|The calibration slope) averages # across # values of \S+ \(# CI # to #\); in a new \S+ it is expected between # and #(?:, and the chance that it is (?:above #|between # and #) there is #)?`, func(js jsonDoc, g map[string]string) []float64 {
			p := "clusters.pooled." + clusterMeasure[g["m"]] + "."
			out := cat(nums(js, p+"estimate", p+"k"), one(0.95), nums(js, p+"ci[0]", p+"ci[1]", p+"prediction_interval[0]", p+"prediction_interval[1]"))
			if strings.Contains(g[""], "the chance") {
				b := "clusters.bounds."
				switch clusterMeasure[g["m"]] {
				case "auc":
					out = append(out, js.num(b+"auc_min"))
				case "oe":
					out = append(out, js.num(b+"oe_low"), js.num(b+"oe_high"))
				case "slope":
					out = append(out, js.num(b+"slope_low"), js.num(b+"slope_high"))
				}
				out = append(out, js.num(p+"prob_acceptable"))
			}
			return out
		}, has("clusters.pooled.auc.estimate")),
		rule("clusters prediction interval minimum", `a prediction interval needs at least #`, func(js jsonDoc, _ map[string]string) []float64 { return one(3) }, nil),
		// Performance over time.
		rule("over time patients", `The # patients with a date in column`, func(js jsonDoc, _ map[string]string) []float64 { return nums(js, "over_time.patients") }, has("over_time.patients")),
		rule("over time left out", `Left out of this section, and only of it \(.*?\): (?P<list>.*?)\.$`, func(js jsonDoc, _ map[string]string) []float64 {
			var out []float64
			for _, p := range []string{"over_time.left_out_missing_date", "over_time.left_out_invalid_date"} {
				if v := js.num(p); v > 0 {
					out = append(out, v)
				}
			}
			return out
		}, nil),
		rule("CUSUM alarm", `The (?P<chart>\w+) chart, looking for (?:more|fewer) events than predicted \(odds (?:of the event )?multiplied by #\), signalled on ⟨date⟩, after # patients(?:, and # times in all)?`, func(js jsonDoc, g map[string]string) []float64 {
			p := fmt.Sprintf("over_time.cusum[%d].", chartIndex(js, g["chart"]))
			out := nums(js, p+"limit.odds_ratio", p+"first_signal.patient")
			if strings.Contains(g[""], "times in all") {
				out = append(out, js.num(p+"signals"))
			}
			return out
		}, nil),
		rule("CUSUM no alarm", `The (?P<chart>\w+) chart, looking for (?:more|fewer) events than predicted \(odds (?:of the event )?multiplied by #\), did not signal in # patients`, func(js jsonDoc, g map[string]string) []float64 {
			p := fmt.Sprintf("over_time.cusum[%d].", chartIndex(js, g["chart"]))
			if js.num(p+"signals") != 0 {
				return []float64{math.NaN(), math.NaN()}
			}
			return nums(js, p+"limit.odds_ratio", "over_time.patients")
		}, nil),
		rule("EWMA", `The EWMA of observed − expected \(λ = #, limits ±# SD\)`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "over_time.ewma.lambda", "over_time.ewma.width")
		}, has("over_time.ewma.lambda")),
		rule("EWMA upper", `crossed its upper limit \(more events than predicted\) on ⟨date⟩, after # patients`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "over_time.ewma.first_above.patient")
		}, nil),
		rule("EWMA lower", `(?:crossed )?its lower limit(?: \(fewer events than predicted\))? on ⟨date⟩, after #`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "over_time.ewma.first_below.patient")
		}, nil),
		rule("cumulative O − E", `there were # (?P<dir>more|fewer) events than the model predicted \(cumulative expected − observed: #; lowest #, highest #`, func(js jsonDoc, g map[string]string) []float64 {
			return cat(one(math.Abs(js.num("over_time.vlad_end"))), nums(js, "over_time.vlad_end", "over_time.vlad_min", "over_time.vlad_max"))
		}, has("over_time.vlad_end")),
		rule("ARL", `with an in-control ARL of # patients`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "over_time.cusum[0].limit.target_arl")
		}, nil),
	}, imputedProseRules()...)
}

// bandCuts are the cut points of a banded subgroup column.
func bandCuts(js jsonDoc, col string) []float64 {
	for i := 0; i < js.len("subgroup_bands"); i++ {
		p := fmt.Sprintf("subgroup_bands[%d].", i)
		if js.str(p+"column") == col {
			var out []float64
			for j := 0; j < js.len(p+"cuts"); j++ {
				out = append(out, js.num(fmt.Sprintf("%scuts[%d]", p, j)))
			}
			return out
		}
	}
	return nil
}

var (
	dateRE = regexp.MustCompile(`\b\d{4}-\d{2}-\d{2}(?:T\d{2}:\d{2}:\d{2}Z)?\b`)
	// citeRE is a year after an author's name ("Vickers & Elkin 2006",
	// "Debray et al. 2015", "Vergouwe et al. (2017)", "BMJ 2024").
	citeRE = regexp.MustCompile(`(?:[A-Z][A-Za-z'’\-]+|al\.),? \(?(?:19|20)\d{2}[a-z]?\b`)
)

// stringsWithDigits are audit.json's string values that hold a digit
// (paths, dates, versions, bounds and their sources, labels), longest
// first: text copied from the record rather than computed for the report.
// The findings of the summary and the case-mix interpretation are left
// out: their numbers are what the rules check.
func stringsWithDigits(js jsonDoc) []string {
	seen := map[string]bool{}
	var walk func(v any, path string)
	walk = func(v any, path string) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				walk(e, path+"."+k)
			}
		case []any:
			for _, e := range x {
				walk(e, path)
			}
		case string:
			if strings.HasPrefix(path, ".summary") || path == ".case_mix.interpretation" {
				return
			}
			if len(x) >= 4 && strings.ContainsAny(x, "0123456789") {
				seen[x] = true
			}
		}
	}
	walk(js.root, "")
	out := make([]string, 0, len(seen))
	for s := range seen {
		out = append(out, s)
	}
	sort.Slice(out, func(i, j int) bool { return len(out[i]) > len(out[j]) || len(out[i]) == len(out[j]) && out[i] < out[j] })
	return out
}

// jsonNumbers are the numeric values of audit.json a number no rule
// claims may stand for: every number outside the curves' long series,
// a thousand times each (per 1000 patients) and every list's length.
func jsonNumbers(js jsonDoc) []float64 {
	var out []float64
	var walk func(v any, path string)
	walk = func(v any, path string) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				if k == "curves" || strings.HasPrefix(k, "lp_") {
					continue
				}
				walk(e, path+"."+k)
			}
		case []any:
			out = append(out, float64(len(x)))
			for _, e := range x {
				walk(e, path)
			}
		case float64:
			out = append(out, x, 1000*x)
		}
	}
	walk(js.root, "")
	return out
}

// proseLine is one line of prose of report.md, with its section.
type proseLine struct {
	section, text string
}

// proseLines are the report's lines outside tables, headings, figures
// and code, markup removed, up to the appendix (the reporting checklist's
// item numbers are the statement's, not the audit's).
func proseLines(md string) []proseLine {
	var out []proseLine
	section, code := "", false
	for _, l := range strings.Split(md, "\n") {
		switch {
		case strings.HasPrefix(l, "```"):
			code = !code
			continue
		case code:
			continue
		case strings.HasPrefix(l, "## "):
			section = strings.TrimSpace(strings.TrimPrefix(l, "## "))
			continue
		case strings.HasPrefix(l, "#"), strings.HasPrefix(l, "|"), strings.HasPrefix(l, "!["), strings.TrimSpace(l) == "":
			continue
		}
		if strings.HasPrefix(section, "Appendix") {
			continue
		}
		out = append(out, proseLine{section, unmark(l)})
	}
	return out
}

// unmark removes Markdown emphasis, code marks and backslash escapes.
func unmark(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		if s[i] == '\\' && i+1 < len(s) {
			b.WriteByte(s[i+1])
			i++
			continue
		}
		b.WriteByte(s[i])
	}
	s = strings.ReplaceAll(b.String(), "**", "")
	s = strings.ReplaceAll(s, "`", "")
	s = strings.TrimPrefix(s, "- ")
	s = strings.TrimPrefix(s, "> ")
	return strings.TrimPrefix(s, "* ")
}

// blank replaces s[i:j] by spaces, so that the numbers it held are
// consumed and the rest keeps its places.
func blank(s string, i, j int) string { return s[:i] + strings.Repeat(" ", j-i) + s[j:] }

// proseCheck is the result of checking a report's prose.
type proseCheck struct {
	problems []string
	fired    map[string]int
	leftover []string // numbers no rule claimed, with the value they matched
}

// checkProse checks every number of the report's prose against audit.json.
func checkProse(md string, js jsonDoc) proseCheck {
	res := proseCheck{fired: map[string]int{}}
	fail := func(format string, args ...any) { res.problems = append(res.problems, fmt.Sprintf(format, args...)) }
	strs := stringsWithDigits(js)
	strSet := map[string]bool{}
	for _, s := range strs {
		strSet[s] = true
	}
	pool := jsonNumbers(js)
	rules := proseRules()
	for _, pl := range proseLines(md) {
		text := pl.text
		where := pl.section
		// Dates are strings of the record: each must be one.
		text = dateRE.ReplaceAllStringFunc(text, func(d string) string {
			if !strSet[d] && !strSet[d[:min(len(d), 10)]] {
				fail("%s: the date %s is nowhere in audit.json (%q)", where, d, pl.text)
			}
			return "⟨date⟩"
		})
		for _, r := range rules {
			for {
				m := r.re.FindStringSubmatchIndex(text)
				if m == nil {
					break
				}
				g := map[string]string{"": text[m[0]:m[1]]}
				for k, name := range r.re.SubexpNames() {
					if name != "" && m[2*k] >= 0 {
						g[name] = text[m[2*k]:m[2*k+1]]
					}
				}
				res.fired[r.name]++
				got := numbers(citeRE.ReplaceAllStringFunc(g[""], func(s string) string { return strings.Repeat(" ", len(s)) }))
				want := r.want(js, g)
				if len(got) != len(want) {
					fail("%s (%s): %q has %d numbers, audit.json gives %d (%v)", where, r.name, g[""], len(got), len(want), want)
				} else {
					for i, t := range got {
						if !t.agrees(want[i]) {
							fail("%s (%s): %q prints %s where audit.json has %.10g", where, r.name, g[""], t.text, want[i])
						}
					}
				}
				text = blank(text, m[0], m[1])
			}
		}
		// Text copied from the record: paths, versions, bounds and sources.
		for _, s := range strs {
			for {
				k := strings.Index(text, s)
				if k < 0 {
					break
				}
				text = blank(text, k, k+len(s))
			}
		}
		text = citeRE.ReplaceAllStringFunc(text, func(s string) string { return strings.Repeat(" ", len(s)) })
		for _, t := range numbers(text) {
			if t.less || !t.pct && (t.v == 0 || t.v == 1) {
				continue // 0 and 1 are the ends of the risk scale and the ideal values
			}
			if (t.text == "95%" || t.text == "1.96" || t.text == "1.959964" || t.text == "97.5%") && !t.less {
				continue // the level of every interval the report states, and its z (Methods)
			}
			match := math.NaN()
			for _, v := range pool {
				if t.agrees(v) {
					match = v
					break
				}
			}
			if math.IsNaN(match) {
				fail("%s: %s has no counterpart in audit.json (%q)", where, t.text, pl.text)
				continue
			}
			res.leftover = append(res.leftover, fmt.Sprintf("%s: %s (audit.json %.6g)", where, t.text, match))
		}
	}
	for _, r := range rules {
		if r.need != nil && r.need(js) && res.fired[r.name] == 0 {
			fail("rule %q matched no sentence, though audit.json has its values: the sentence changed, so update the rule", r.name)
		}
	}
	return res
}

// plantProse plants single mistakes in the prose of a full audit's
// report, each one a slip the report's code could make, and fails if the
// prose check does not find each.
func plantProse(t *testing.T, full printedRun) {
	js := full.js
	f := func(format, path string) string { return fmt.Sprintf(format, js.num(path)) }
	ci := func(format, path string) string { return f(format, path+"[0]") + " to " + f(format, path+"[1]") }
	first := int(js.num("over_time.cusum[0].first_signal.patient"))
	for _, m := range []struct{ name, old, new string }{
		{"summary CITL with the slope's interval", "calibration-in-the-large " + f("%.3f", "calibration.citl") + ", CI " + ci("%.3f", "calibration.citl_ci"),
			"calibration-in-the-large " + f("%.3f", "calibration.citl") + ", CI " + ci("%.3f", "calibration.slope_ci")},
		{"summary AUC interval labelled 90%", "AUC " + f("%.3f", "discrimination.auc") + " (95% CI", "AUC " + f("%.3f", "discrimination.auc") + " (90% CI"},
		{"summary AUC lower end replaced by the SE", "(95% CI " + f("%.3f", "discrimination.auc_ci[0]") + " to", "(95% CI " + f("%.3f", "discrimination.auc_se") + " to"},
		{"summary ICI in points not scaled", fmt.Sprintf("(ICI; %.2f percentage points)", 100*js.num("calibration.ici")), f("(ICI; %.2f percentage points)", "calibration.ici")},
		{"summary corrected AUC shown as the apparent", "shrinks to " + f("%.3f", "internal.metrics.auc.corrected"), "shrinks to " + f("%.3f", "internal.metrics.auc.apparent")},
		{"cluster AUC prediction interval as its CI", "it is expected between " + f("%.3f", "clusters.pooled.auc.prediction_interval[0]"), "it is expected between " + f("%.3f", "clusters.pooled.auc.ci[0]")},
		{"cluster chance of acceptable O/E off by a point", fmt.Sprintf("there is %.1f%%", 100*js.num("clusters.pooled.oe.prob_acceptable")), fmt.Sprintf("there is %.1f%%", 100*js.num("clusters.pooled.oe.prob_acceptable")+1)},
		{"first CUSUM signal one patient late", fmt.Sprintf("after %s patients, and", countText(first)), fmt.Sprintf("after %s patients, and", countText(first+1))},
		{"cumulative O − E lowest as the end", "; lowest " + f("%+.1f", "over_time.vlad_min"), "; lowest " + f("%+.1f", "over_time.vlad_end")},
		{"membership c to two decimals rounded down", f("apart with c = %.2f", "case_mix.membership_c"), fmt.Sprintf("apart with c = %.2f", js.num("case_mix.membership_c")-0.01)},
		{"linear predictor ratio inverted", fmt.Sprintf("(ratio %.2f)", js.num("case_mix.lp_sd_new")/js.num("case_mix.lp_sd_development")), fmt.Sprintf("(ratio %.2f)", js.num("case_mix.lp_sd_development")/js.num("case_mix.lp_sd_new"))},
		{"a number with no counterpart", "Net benefit counts the true positives per patient", "Net benefit, 0.4321 here on average, counts the true positives per patient"},
	} {
		t.Run("corrupt prose/"+m.name, func(t *testing.T) {
			if m.old == m.new || !strings.Contains(full.report, m.old) {
				t.Fatalf("cannot plant %q: no %q in the report", m.name, m.old)
			}
			md := strings.Replace(full.report, m.old, m.new, 1)
			if len(checkProse(md, js).problems) == 0 {
				t.Errorf("%s planted in report.md and the prose check found nothing", m.name)
			}
		})
	}
}

// countText writes n with its thousands separated by commas, as the
// report writes counts of patients.
func countText(n int) string {
	s := fmt.Sprint(n)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}
