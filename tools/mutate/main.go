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
	{"decision curve treat-all line plots the model", "plots/plots.go", "all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.TreatAll}", "all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.Model}", []string{"./plots"}, ""},
}

func main() {
	only := flag.String("only", "", "run only the mutations whose name contains this text (alternatives separated by |)")
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
	for _, m := range mutations {
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
