// Command mutate is the project's mutation test, run on demand (not in
// CI): it plants realistic single mistakes in the numeric code, the
// report and the figures, one at a time, in a temporary copy of the
// repository, runs the affected packages' tests with -short, and counts
// the mutations the tests kill (a test fails) and those that survive.
//
// Usage, from the repository root:
//
//	go run ./tools/mutate            # every mutation
//	go run ./tools/mutate -only "O/E|Firth"   # those whose name contains either
//
// Each mutation names a file and an exact text that must occur in it
// exactly once; a mutation whose text is not found is reported as stale
// (the code moved on) and counts as neither, as does one that does not
// compile. The kill rate is written
// into DEVELOPERS.md by hand, with the reason for any survivor.
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"time"
)

// mutation is one planted mistake: in file, old becomes new; pkgs are
// the packages whose tests must catch it, run is an optional -run filter.
type mutation struct {
	name, file, old, new string
	pkgs                 []string
	run                  string
}

// printed is the -run filter for cmd/riskaudit: the check of every printed
// number against audit.json and the JSON keys test (the package's whole
// suite takes minutes).
const printed = "TestPrintedNumbersMatchJSON|TestJSONKeysDocumented"

var mutations = []mutation{
	// metrics: discrimination
	{"DeLong variance divisor n instead of n−1", "metrics/numeric.go", "return (s + c) / float64(len(x)-1)", "return (s + c) / float64(len(x))", []string{"./metrics"}, ""},
	{"DeLong SE: events and non-events swapped", "metrics/discrimination.go", "variance(v10)/float64(m) + variance(v01)/float64(n)", "variance(v10)/float64(n) + variance(v01)/float64(m)", []string{"./metrics"}, ""},
	{"AUC logit interval divided by AUC only", "metrics/discrimination.go", "h := z975 * se / (a * (1 - a))", "h := z975 * se / a", []string{"./metrics"}, ""},
	{"z 1.645 (a 90% interval) everywhere", "metrics/numeric.go", "const z975 = 1.959963984540054", "const z975 = 1.6448536269514722", []string{"./metrics", "./validate"}, ""},
	// metrics: calibration
	{"O/E interval without the square root", "metrics/calibration.go", "h := z975 * math.Sqrt((1-observed/n)/observed)", "h := z975 * ((1 - observed/n) / observed)", []string{"./metrics"}, ""},
	{"LOWESS Σl² over Σw instead of (Σw)²", "metrics/lowess.go", "sl2 := (a*a*sw2 - 2*a*b*sw2u + b*b*sw2u2) / (sw * sw)", "sl2 := (a*a*sw2 - 2*a*b*sw2u + b*b*sw2u2) / sw", []string{"./metrics", "./validate"}, ""},
	{"LOWESS local mean Σw²/Σw", "metrics/lowess.go", "return ybar, localMeanSE(ybar, sw2/(sw*sw))", "return ybar, localMeanSE(ybar, sw2/sw)", []string{"./metrics", "./validate"}, ""},
	{"LOWESS band ±1·SE", "validate/validate.go", "h := metrics.Z975 * c.SE[i]", "h := c.SE[i]", []string{"./validate"}, ""},
	{"LOWESS δ 2% between 10,000 and 100,000 rows", "metrics/lowess.go", "return 0.01 * (xmax - xmin)", "return 0.02 * (xmax - xmin)", []string{"./metrics", "./validate"}, ""},
	{"LOWESS δ from 1,000 rows", "metrics/lowess.go", "case n <= 10000:", "case n <= 1000:", []string{"./metrics", "./validate"}, ""},
	{"LOWESS tricube as a square", "metrics/lowess.go", "wj := t * t * t", "wj := t * t", []string{"./metrics"}, ""},
	{"Brier scaled by ȳ instead of ȳ(1 − ȳ)", "metrics/overall.go", "ybar := sum(y) / n\n\treturn brier, 1 - brier/(ybar*(1-ybar))", "ybar := sum(y) / n\n\treturn brier, 1 - brier/ybar", []string{"./metrics"}, ""},
	// metrics: usefulness
	{"risk on the threshold not treated (> instead of ≥)", "metrics/usefulness.go", "k := sort.SearchFloat64s(p, t) // rows [k, n) have p ≥ t", "k := sort.Search(n, func(j int) bool { return p[j] > t })", []string{"./metrics", "./validate"}, ""},
	{"treat-all net benefit without the odds", "metrics/usefulness.go", "TreatAll:  events/n - (n-events)/n*odds,", "TreatAll:  events/n - (n-events)/n*c.Threshold,", []string{"./metrics"}, ""},
	{"gain against treat-all even when it is negative", "metrics/usefulness.go", "func (nb NetBenefit) Gain() float64 { return nb.Model - math.Max(nb.TreatAll, nb.TreatNone) }", "func (nb NetBenefit) Gain() float64 { return nb.Model - nb.TreatAll }", []string{"./metrics", "./resample", "./report", "./cmd/riskaudit"}, printed},
	{"Clopper–Pearson lower end at 5%", "metrics/usefulness.go", "lo = distuv.Beta{Alpha: float64(k), Beta: float64(n - k + 1)}.Quantile(0.025)", "lo = distuv.Beta{Alpha: float64(k), Beta: float64(n - k + 1)}.Quantile(0.05)", []string{"./metrics"}, ""},
	// validate: criteria
	{"criterion gain against a negative treat-all", "validate/criteria.go", "gain := nb.Model - math.Max(nb.TreatAll, 0)", "gain := nb.Model - nb.TreatAll", []string{"./validate"}, ""},
	{"at_least exclusive", "validate/criteria.go", "r.Passed = val >= *c.AtLeast", "r.Passed = val > *c.AtLeast", []string{"./validate"}, ""},
	{"at_most exclusive", "validate/criteria.go", "r.Passed = val <= *c.AtMost", "r.Passed = val < *c.AtMost", []string{"./validate"}, ""},
	{"between exclusive below", "validate/criteria.go", "r.Passed = val >= c.Between[0] && val <= c.Between[1]", "r.Passed = val > c.Between[0] && val <= c.Between[1]", []string{"./validate"}, ""},
	{"contains exclusive", "validate/criteria.go", "r.Passed = iv[0] <= *c.Contains && *c.Contains <= iv[1]", "r.Passed = iv[0] < *c.Contains && *c.Contains <= iv[1]", []string{"./validate"}, ""},
	// resample, update, model, logistic
	{"percentile interval at 90%", "resample/percentile.go", "return [2]float64{metrics.Quantile7(v, 0.025), metrics.Quantile7(v, 0.975)}", "return [2]float64{metrics.Quantile7(v, 0.05), metrics.Quantile7(v, 0.95)}", []string{"./resample"}, ""},
	{"optimism added instead of subtracted", "resample/optimism.go", "res.Corrected = res.Apparent.sub(res.Optimism)", "res.Corrected = res.Optimism.sub(res.Apparent)", []string{"./resample"}, ""},
	{"bootstrap refits of a Firth recipe by maximum likelihood", "resample/optimism.go", "logistic.Options{Start: pr.Coef, Firth: pr.Firth, Workers: 1}", "logistic.Options{Start: pr.Coef, Workers: 1}", []string{"./resample"}, ""},
	{"update AIC with 1 × parameters", "update/update.go", "AIC: s.d + 2*float64(s.k)", "AIC: s.d + float64(s.k)", []string{"./update"}, ""},
	{"3-knot default at 5% and 95%", "model/design.go", "3: {0.10, 0.50, 0.90},", "3: {0.05, 0.50, 0.95},", []string{"./model"}, ""},
	{"5-knot default middle quantiles", "model/design.go", "5: {0.05, 0.275, 0.50, 0.725, 0.95},", "5: {0.05, 0.25, 0.50, 0.75, 0.95},", []string{"./model"}, ""},
	{"Firth adjustment without the weights", "logistic/logistic.go", "a := wt * m * (1 - m) * q * (0.5 - m)", "a := m * (1 - m) * q * (0.5 - m)", []string{"./logistic"}, ""},
	// report
	{"O/E row with the CITL interval", "report/report.go", `f3(c.OE), ci3(c.OECI)`, `f3(c.OE), ci3(c.CITLCI)`, []string{"./report", "./cmd/riskaudit"}, printed},
	{"slope cell shows its SE", "report/report.go", `t.add("calibration slope", f3(c.Slope),`, `t.add("calibration slope", f3(c.SlopeSE),`, []string{"./report", "./cmd/riskaudit"}, printed},
	{"update table AIC column shows −2LL", "report/report.go", `num(s.Neg2LL, "%.3f"), num(s.AIC, "%.3f"))`, `num(s.Neg2LL, "%.3f"), num(s.Neg2LL, "%.3f"))`, []string{"./report", "./cmd/riskaudit"}, printed},
	{"subgroup O/E with the CITL interval", "report/report.go", "iv(g.OE, g.OECI, 2)", "iv(g.OE, g.CITLCI, 2)", []string{"./report", "./cmd/riskaudit"}, printed},
	{"development change reversed", "report/report.go", `change = signed(now-dev, "%+"+validate.MeasureFormat(key)[1:])`, `change = signed(dev-now, "%+"+validate.MeasureFormat(key)[1:])`, []string{"./report", "./cmd/riskaudit"}, printed},
	{"stdout AUC with the logit interval", "report/summary.go", `withCI(d.AUC, d.CI, a.AUCCIReason())`, `withCI(d.AUC, d.LogitCI, a.AUCCIReason())`, []string{"./report", "./cmd/riskaudit"}, printed},
	{"stdout O/E with the CITL interval", "report/summary.go", `withCI(c.OE, c.OECI, "")`, `withCI(c.OE, c.CITLCI, "")`, []string{"./report", "./cmd/riskaudit"}, printed},
	// figures
	{"decision curve treat-all line plots the model", "plots/plots.go", "all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.TreatAll}", "all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.Model}", []string{"./plots", figures}, ""},

	// Second round (issue 13, finishing): numeric code beyond the first
	// list, the report's prose, the clusters and over-time sections, the
	// summary on stdout, and the figures' data.
	// metrics
	{"Hosmer–Lemeshow df groups − 2 on a new cohort", "metrics/hosmer.go", "t.DF = t.Groups\n", "t.DF = t.Groups - 2\n", []string{"./metrics", "./validate"}, ""},
	{"type-7 quantile at n·q instead of (n − 1)·q", "metrics/numeric.go", "n := len(sorted)\n\tif n == 0 {\n\t\treturn math.NaN()\n\t}\n\th := float64(n-1) * q", "n := len(sorted)\n\tif n == 0 {\n\t\treturn math.NaN()\n\t}\n\th := float64(n) * q", []string{"./metrics", "./validate", "./resample"}, ""},
	{"quantile by selection at n·q (E50, E90, Hosmer–Lemeshow cuts)", "metrics/numeric.go", "n := len(a)\n\tif n == 0 {\n\t\treturn math.NaN()\n\t}\n\th := float64(n-1) * q", "n := len(a)\n\tif n == 0 {\n\t\treturn math.NaN()\n\t}\n\th := float64(n) * q", []string{"./metrics", "./validate"}, ""},
	{"Clopper–Pearson upper end at 95%", "metrics/usefulness.go", "Beta: float64(n - k)}.Quantile(0.975)", "Beta: float64(n - k)}.Quantile(0.95)", []string{"./metrics"}, ""},
	{"model net benefit weighted by the threshold, not its odds", "metrics/usefulness.go", "Model:     float64(c.TP)/n - float64(c.FP)/n*odds,", "Model:     float64(c.TP)/n - float64(c.FP)/n*c.Threshold,", []string{"./metrics"}, ""},
	{"DeLong component: tied non-events counted whole", "metrics/discrimination.go", "v := (float64(belowY) + float64(yy)/2) / float64(n)", "v := (float64(belowY) + float64(yy)) / float64(n)", []string{"./metrics"}, ""},
	// meta, monitor, case-mix, resample
	{"I² with Q − k instead of Q − (k − 1)", "meta/meta.go", "r.I2 = math.Max(0, (r.Q-float64(k-1))/r.Q)", "r.I2 = math.Max(0, (r.Q-float64(k))/r.Q)", []string{"./meta", "./validate"}, ""},
	{"HKSJ interval on k degrees of freedom", "meta/meta.go", "t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 1)}.Quantile(1 - alpha/2)", "t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k)}.Quantile(1 - alpha/2)", []string{"./meta", "./validate"}, ""},
	{"prediction interval on k − 1 degrees of freedom", "meta/meta.go", "t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 2)}.Quantile(1 - alpha/2)", "t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 1)}.Quantile(1 - alpha/2)", []string{"./meta", "./validate"}, ""},
	{"EWMA variance with (1 − λ) not squared", "monitor/charts.go", "a, a2, l2 := 1-lambda, (1-lambda)*(1-lambda), lambda*lambda", "a, a2, l2 := 1-lambda, 1-lambda, lambda*lambda", []string{"./monitor"}, ""},
	{"EWMA variance with λ instead of λ²", "monitor/charts.go", "a, a2, l2 := 1-lambda, (1-lambda)*(1-lambda), lambda*lambda", "a, a2, l2 := 1-lambda, (1-lambda)*(1-lambda), lambda", []string{"./monitor"}, ""},
	{"CUSUM event weight without the non-event part", "monitor/charts.go", "return w0, w0 + math.Log(r)", "return w0, math.Log(r)", []string{"./monitor"}, ""},
	{"standardised difference over the summed variances", "validate/casemix.go", "return (b - a) / math.Sqrt((va+vb)/2), \"\"", "return (b - a) / math.Sqrt(va+vb), \"\"", []string{"./validate"}, ""},
	{"percentile interval ends swapped in order", "resample/percentile.go", "return [2]float64{metrics.Quantile7(v, 0.025), metrics.Quantile7(v, 0.975)}", "return [2]float64{metrics.Quantile7(v, 0.975), metrics.Quantile7(v, 0.025)}", []string{"./resample"}, ""},
	// the summary's findings (report.md and audit.json)
	{"summary: pairs out of 100 truncated, not rounded", "validate/audit.go", "aucWord(d.AUC), int(math.Round(100*d.AUC)))", "aucWord(d.AUC), int(100*d.AUC))", []string{"./validate", "./cmd/riskaudit"}, printed},
	{"summary: E50 and E90 swapped", "validate/audit.go", "c.ICI, 100*c.ICI, c.E50, c.E90)", "c.ICI, 100*c.ICI, c.E90, c.E50)", []string{"./validate", "./cmd/riskaudit"}, printed},
	{"summary: O/E sentence with the CITL interval", "validate/audit.go", "c.Observed, c.Expected, c.OE, ciText(c.OECI, \"%.3f\", \"\"), citl)", "c.Observed, c.Expected, c.OE, ciText(c.CITLCI, \"%.3f\", \"\"), citl)", []string{"./validate", "./cmd/riskaudit"}, printed},
	{"summary: gain counted against treat-all", "validate/audit.go", "if GainReaches(nb.Gain(), p.NetBenefitMinGain) {", "if GainReaches(nb.Model-nb.TreatAll, p.NetBenefitMinGain) {", []string{"./validate", "./cmd/riskaudit"}, printed},
	{"summary: corrected AUC shows the apparent", "validate/audit.go", "in.Bootstrap-in.Failed, m.AUC.Apparent, m.AUC.Corrected, in.Shrinkage)", "in.Bootstrap-in.Failed, m.AUC.Apparent, m.AUC.Apparent, in.Shrinkage)", []string{"./validate", "./cmd/riskaudit"}, printed},
	{"case-mix: spread ratio inverted", "validate/casemix.go", "spread := cm.LPSDNew / cm.LPSDDev", "spread := cm.LPSDDev / cm.LPSDNew", []string{"./validate", "./cmd/riskaudit"}, printed},
	// report: clusters and over time
	{"clusters: prediction interval sentence gives the CI", "report/clusters.go", "num(pm.PredictionInterval[0], format), num(pm.PredictionInterval[1], format))", "num(pm.CI[0], format), num(pm.CI[1], format))", []string{"./report", "./cmd/riskaudit"}, printed},
	{"clusters: AUC cell with the CITL's SE", "report/clusters.go", "se(g.AUC, g.AUCSE, \"%.3f\")", "se(g.AUC, g.CITLSE, \"%.3f\")", []string{"./report", "./cmd/riskaudit"}, printed},
	{"clusters: τ² column shows I²", "report/clusters.go", "num(m.pm.Tau2, \"%.4f\"), pct(m.pm.I2)", "num(m.pm.I2, \"%.4f\"), pct(m.pm.I2)", []string{"./report", "./cmd/riskaudit"}, printed},
	{"over time: first signal a patient early", "report/overtime.go", "c.Name, what, c.First.Date, count(c.First.Patient), more)", "c.Name, what, c.First.Date, count(c.First.Patient-1), more)", []string{"./report", "./cmd/riskaudit"}, printed},
	{"over time: lowest cumulative O − E shows the end", "report/overtime.go", "num(s.VLADMin, \"%+.1f\")", "num(s.VLADEnd, \"%+.1f\")", []string{"./report", "./cmd/riskaudit"}, printed},
	{"over time: period CITL with the O/E interval", "report/overtime.go", "f3(q.CITL)+\" (\"+Interval(q.CITLCI,", "f3(q.CITL)+\" (\"+Interval(q.OECI,", []string{"./report", "./cmd/riskaudit"}, printed},
	{"over time: ARL's MC SE shows h's", "report/overtime.go", "count(int(l.TargetARL)), l.ARLSE)", "count(int(l.TargetARL)), l.HSE)", []string{"./report", "./cmd/riskaudit"}, printed},
	// report: tables and stdout
	{"classification cell: interval not scaled to percent", "report/report.go", "interval([2]float64{100 * p.CI[0], 100 * p.CI[1]}, \"%.1f\", \"–\", \"\"))", "interval([2]float64{p.CI[0], p.CI[1]}, \"%.1f\", \"–\", \"\"))", []string{"./report", "./cmd/riskaudit"}, printed},
	{"stdout: E90 shows E50", "report/summary.go", "f4(c.ICI), f4(c.E90))", "f4(c.ICI), f4(c.E50))", []string{"./report", "./cmd/riskaudit"}, printed},
	// figures
	{"ROC curve with FPR and TPR swapped", "plots/plots.go", "xys[i] = plotter.XY{X: 100 * r.FPR, Y: 100 * r.TPR}", "xys[i] = plotter.XY{X: 100 * r.TPR, Y: 100 * r.FPR}", []string{"./plots", figures}, ""},
	{"calibration band's lower edge drawn at the smooth", "plots/plots.go", "lo[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Lower}", "lo[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Observed}", []string{"./plots", figures}, ""},
	{"risk groups drawn at their highest risk", "plots/plots.go", "pts[i] = plotter.XY{X: 100 * g.MeanRisk, Y: 100 * g.Observed.Value}", "pts[i] = plotter.XY{X: 100 * g.MaxRisk, Y: 100 * g.Observed.Value}", []string{"./plots", figures}, ""},
	{"decision curve thresholds not in percent", "plots/plots.go", "model[i] = plotter.XY{X: 100 * v.Threshold, Y: v.Model}", "model[i] = plotter.XY{X: v.Threshold, Y: v.Model}", []string{"./plots", figures}, ""},
	{"cluster forest: prediction interval drawn as the CI", "plots/clusterforest.go", "{X: pm.PredictionInterval[0], Y: -0.25}, {X: pm.PredictionInterval[1], Y: -0.25}", "{X: pm.CI[0], Y: -0.25}, {X: pm.CI[1], Y: -0.25}", []string{"./plots", figures}, ""},
	{"case mix: the audited cohort's histogram drawn with the development shares", "plots/casemix.go", "dev, aud := step(cm.LPDev), step(cm.LPNew)", "dev, aud := step(cm.LPDev), step(cm.LPDev)", []string{"./plots", figures}, ""},
	{"case mix: a standardised difference drawn with its sign flipped", "plots/casemix.go", "seg := plotter.XYs{{X: 0, Y: y}, {X: v, Y: y}}", "seg := plotter.XYs{{X: 0, Y: y}, {X: -v, Y: y}}", []string{"./plots", figures}, ""},
	{"trend chart: the interval drawn symmetric about the estimate", "plots/trend.go", "{v[0] - v[1], v[2] - v[0]}", "{v[0] - v[1], v[0] - v[1]}", []string{"./plots"}, ""},
	{"over time: a CUSUM limit drawn at h of the other chart", "plots/monitor.go", "limit := plotter.XYs{{X: 0, Y: sign * c.Limit.H}, {X: float64(r.N), Y: sign * c.Limit.H}}", "limit := plotter.XYs{{X: 0, Y: sign * r.Charts[1-k].Limit.H}, {X: float64(r.N), Y: sign * r.Charts[1-k].Limit.H}}", []string{"./audit"}, "TestOverTimeFigureData"},
	{"over time: the period chart's CITL drawn with the O/E interval", "plots/monitor.go", "return q.CITL, q.CITLCI", "return q.CITL, q.OECI", []string{"./audit"}, "TestOverTimeFigureData"},
	{"over time: EWMA crossings marked one patient late", "plots/monitor.go", "xys[k] = plotter.XY{X: float64(i + 1), Y: scale * v[i]}", "xys[k] = plotter.XY{X: float64(i + 2), Y: scale * v[i]}", []string{"./audit"}, "TestOverTimeFigureData"},
	{"over time: the cumulative path thinned without each run's lowest value", "plots/monitor.go", "if v[i] < v[imin] {", "if v[i] < v[imin] && false {", []string{"./audit"}, "TestOverTimeFigureData"},
	// Third round: more of the numeric code.
	{"DerSimonian–Laird τ² without Σw²/Σw", "meta/meta.go", "/(sw-sw2/sw))", "/sw)", []string{"./meta", "./validate"}, ""},
	{"chance of acceptable performance on k − 1 df", "meta/meta.go", "t := distuv.StudentsT{Mu: r.Estimate, Sigma: s, Nu: float64(r.K - 2)}", "t := distuv.StudentsT{Mu: r.Estimate, Sigma: s, Nu: float64(r.K - 1)}", []string{"./meta", "./validate"}, ""},
	{"Nagelkerke R² not rescaled by its maximum", "metrics/overall.go", "max := -math.Expm1(-nullDev / fn)\n\treturn cs / max", "return cs", []string{"./metrics", "./logistic", "./resample"}, ""},
	{"Hosmer–Lemeshow variance without (1 − E/n)", "metrics/hosmer.go", "v := grp.Expected * (1 - grp.Expected/float64(grp.N))", "v := grp.Expected", []string{"./metrics"}, ""},
	{"sample size: O/E half-width z·SE, not by sinh", "samplesize/samplesize.go", "se := math.Asinh(t.OEWidth/(2*a.OE)) / z", "se := t.OEWidth / (2 * a.OE) / z", []string{"./samplesize"}, ""},
	{"sample size: O/E variance over nφ²", "samplesize/samplesize.go", "e.q/(phi*se*se), why)", "e.q/(phi*phi*se*se), why)", []string{"./samplesize"}, ""},
	{"CITL interval taken from the slope's", "validate/validate.go", "CITL: citl.Value, CITLSE: citl.SE, CITLCI: citl.CI,", "CITL: citl.Value, CITLSE: citl.SE, CITLCI: slope.CI,", []string{"./validate"}, ""},
	{"subgroup band: a value on a cut in the band below", "validate/bands.go", "return cuts[j] > v }))", "return cuts[j] >= v }))", []string{"./validate"}, ""},
	{"CUSUM not reset at zero", "monitor/charts.go", "s = math.Max(0, s+w)", "s = s + w", []string{"./monitor"}, ""},
}

// figures is the figure-data check of the audit package (each series
// drawn against audit.json), run alone: the package's whole suite takes
// minutes.
const figures = "./audit@TestDemoFigures"

func main() {
	only := flag.String("only", "", "run only the mutations whose name contains this text (alternatives separated by |)")
	skip := flag.Int("skip", 0, "skip the first N mutations of the list")
	flag.Parse()
	root, err := os.Getwd()
	if err != nil {
		fail(err)
	}
	tmp, err := os.MkdirTemp("", "riskaudit-mutate-")
	if err != nil {
		fail(err)
	}
	defer os.RemoveAll(tmp)
	if err := copyRepo(root, tmp); err != nil {
		fail(err)
	}
	start := time.Now()
	killed, survived, stale := 0, 0, 0
	var survivors []string
	for i, m := range mutations {
		if i < *skip {
			continue
		}
		if *only != "" && !matchesAny(m.name, strings.Split(*only, "|")) {
			continue
		}
		path := filepath.Join(tmp, m.file)
		orig, err := os.ReadFile(path)
		if err != nil {
			fail(err)
		}
		if n := strings.Count(string(orig), m.old); n != 1 {
			fmt.Printf("STALE     %-55s %s: text found %d times\n", m.name, m.file, n)
			stale++
			continue
		}
		if err := os.WriteFile(path, []byte(strings.Replace(string(orig), m.old, m.new, 1)), 0o644); err != nil {
			fail(err)
		}
		t0 := time.Now()
		ok, out := runTests(tmp, m)
		if err := os.WriteFile(path, orig, 0o644); err != nil {
			fail(err)
		}
		if !ok && (strings.Contains(out, "[build failed]") || strings.Contains(out, "[setup failed]")) {
			// A mutation that does not compile tests nothing.
			fmt.Printf("BROKEN    %-55s does not build%s\n", m.name, firstFailure(out))
			stale++
			continue
		}
		if ok {
			survived++
			survivors = append(survivors, m.name)
			fmt.Printf("SURVIVED  %-55s (%s)\n", m.name, time.Since(t0).Round(time.Second))
		} else {
			killed++
			fmt.Printf("killed    %-55s (%s)%s\n", m.name, time.Since(t0).Round(time.Second), firstFailure(out))
		}
	}
	total := killed + survived
	if total == 0 {
		fmt.Println("no mutation run")
		return
	}
	fmt.Printf("\n%d of %d mutations killed (%.0f%%), %d survived, %d stale, in %s\n",
		killed, total, 100*float64(killed)/float64(total), survived, stale, time.Since(start).Round(time.Second))
	for _, s := range survivors {
		fmt.Println("  survived:", s)
	}
}

func matchesAny(name string, parts []string) bool {
	for _, p := range parts {
		if strings.Contains(name, p) {
			return true
		}
	}
	return false
}

// runTests runs m's packages' tests in dir; it reports whether they
// passed (the mutation survived) and their output.
func runTests(dir string, m mutation) (bool, string) {
	ctx, cancel := context.WithTimeout(context.Background(), 6*time.Minute)
	defer cancel()
	args := []string{"test", "-short", "-count=1"}
	// A package written pkg@Filter runs only the tests Filter selects.
	var pkgs []string
	for _, p := range m.pkgs {
		if pkg, filter, ok := strings.Cut(p, "@"); ok {
			if ok, out := goTest(ctx, dir, append(append([]string{}, args...), "-run", filter, pkg)); !ok {
				return false, out
			}
			continue
		}
		pkgs = append(pkgs, p)
	}
	m.pkgs = pkgs
	if len(m.pkgs) == 0 {
		return true, ""
	}
	if m.run != "" {
		// The filter applies to every package: keep each package's own
		// tests by adding it only where it names tests of cmd/riskaudit.
		var plain, filtered []string
		for _, p := range m.pkgs {
			if p == "./cmd/riskaudit" {
				filtered = append(filtered, p)
			} else {
				plain = append(plain, p)
			}
		}
		ok1, out1 := true, ""
		if len(plain) > 0 {
			ok1, out1 = goTest(ctx, dir, append(args, plain...))
		}
		if !ok1 {
			return false, out1
		}
		return goTest(ctx, dir, append(append(args, "-run", m.run), filtered...))
	}
	return goTest(ctx, dir, append(args, m.pkgs...))
}

func goTest(ctx context.Context, dir string, args []string) (bool, string) {
	cmd := exec.CommandContext(ctx, "go", args...)
	cmd.Dir = dir
	out, err := cmd.CombinedOutput()
	return err == nil, string(out)
}

// firstFailure is the first failing test's name in go test output.
func firstFailure(out string) string {
	for _, l := range strings.Split(out, "\n") {
		if strings.HasPrefix(strings.TrimSpace(l), "--- FAIL") {
			return " " + strings.TrimSpace(l)
		}
	}
	for _, l := range strings.Split(out, "\n") {
		if strings.Contains(l, "build failed") || strings.Contains(l, "cannot use") {
			return " (does not build: " + strings.TrimSpace(l) + ")"
		}
	}
	return ""
}

// copyRepo copies the files git tracks (and untracked ones not ignored)
// from root into dst.
func copyRepo(root, dst string) error {
	out, err := exec.Command("git", "-C", root, "ls-files", "--cached", "--others", "--exclude-standard").Output()
	if err != nil {
		return fmt.Errorf("listing the repository's files: %w", err)
	}
	for _, f := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		if f == "" {
			continue
		}
		if err := copyFile(filepath.Join(root, f), filepath.Join(dst, f)); err != nil {
			return err
		}
	}
	return nil
}

func copyFile(src, dst string) error {
	in, err := os.Open(src)
	if err != nil {
		if os.IsNotExist(err) {
			return nil // deleted in the worktree but not yet in the index
		}
		return err
	}
	defer in.Close()
	if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
		return err
	}
	out, err := os.Create(dst)
	if err != nil {
		return err
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "mutate:", err)
	os.Exit(2)
}
