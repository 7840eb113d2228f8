package main

import (
	"fmt"
	"os"
	"strings"
	"testing"
	"time"
)

// Table rules of the sections across clusters and over time, for the
// check of printed numbers (printed_test.go).

func (c *checker) clusterIndex(name string) int {
	for i := 0; i < c.js.len("clusters.per_cluster"); i++ {
		if c.js.str(fmt.Sprintf("clusters.per_cluster[%d].cluster", i)) == name {
			return i
		}
	}
	return -1
}

// clusterRow: one cluster's measures, each with its SE (the O/E with its
// interval), as audit.json's clusters.per_cluster has them.
func clusterRow(c *checker, t mdTable, row []string, _ int) {
	where := "cluster " + row[0]
	i := c.clusterIndex(row[0])
	if i < 0 {
		c.fail("%s: no such cluster in audit.json", where)
		return
	}
	p := fmt.Sprintf("clusters.per_cluster[%d].", i)
	for j, h := range t.header[1:] {
		cell := row[j+1]
		switch h {
		case "patients":
			c.cell(where+" patients", cell, c.js.num(p+"n"))
		case "events":
			c.cell(where+" events", cell, c.js.num(p+"events"))
		case "AUC (SE)":
			c.cell(where+" AUC", cell, c.js.num(p+"auc"), c.js.num(p+"auc_se"))
		case "O/E (95% CI)":
			c.cell(where+" O/E", cell, c.js.num(p+"oe"), c.js.num(p+"oe_ci[0]"), c.js.num(p+"oe_ci[1]"))
		case "CITL (SE)":
			c.cell(where+" CITL", cell, c.js.num(p+"citl"), c.js.num(p+"citl_se"))
		case "slope (SE)":
			c.cell(where+" slope", cell, c.js.num(p+"slope"), c.js.num(p+"slope_se"))
		case "not pooled":
			var left []string
			reasons := map[string]bool{}
			for k := 0; k < c.js.len(p+"excluded"); k++ {
				q := fmt.Sprintf("%sexcluded[%d].", p, k)
				left = append(left, c.js.str(q+"measure")+": "+c.js.str(q+"reason"))
				reasons[c.js.str(q+"reason")] = true
			}
			want := strings.Join(left, "; ")
			// The four measures left out for one reason are written once,
			// "all measures: REASON".
			if all, ok := strings.CutPrefix(strings.TrimSpace(cell), "all measures: "); ok && len(left) == 4 && len(reasons) == 1 && reasons[all] {
				want = strings.TrimSpace(cell)
			}
			if len(numbers(cell)) > 0 && !strings.Contains(strings.Join(left, " "), strings.TrimSpace(cell)) && strings.TrimSpace(cell) != want {
				c.fail("%s not pooled: %q, audit.json %q", where, cell, want)
			}
		default:
			c.fail("clusters: column %q has no rule", h)
		}
	}
}

// pooledRow: a pooled measure with its interval, prediction interval,
// τ², I² and the chance of acceptable performance in a new cluster.
func pooledRow(c *checker, t mdTable, row []string, _ int) {
	keys := map[string]string{"AUC": "auc", "O/E": "oe", "CITL": "citl", "slope": "slope"}
	k, ok := keys[row[0]]
	where := "pooled " + row[0]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	p := "clusters.pooled." + k + "."
	for j, h := range t.header[1:] {
		cell := row[j+1]
		switch {
		case h == "clusters pooled":
			c.cell(where+" k", cell, c.js.num(p+"k"))
		case h == "pooled (95% CI)":
			c.cell(where+" estimate", cell, c.js.num(p+"estimate"), c.js.num(p+"ci[0]"), c.js.num(p+"ci[1]"))
		case h == "95% prediction interval":
			c.ci(where+" prediction interval", cell, p+"prediction_interval")
		case h == "τ²":
			c.cell(where+" τ²", cell, c.js.num(p+"tau2"))
		case h == "I²":
			c.cell(where+" I²", cell, c.js.num(p+"i2"))
		case h == "acceptable":
			if a := c.js.str(p + "acceptable"); a != "" && cell != a {
				c.fail("%s acceptable: %q, audit.json %q", where, cell, a)
			}
		case strings.HasPrefix(h, "chance in a new "):
			if v := c.js.num(p + "prob_acceptable"); v == v {
				c.cell(where+" chance", cell, v)
			} else {
				c.cell(where+" chance", cell)
			}
		default:
			c.fail("pooled: column %q has no rule", h)
		}
	}
}

// periodRow: calibration and discrimination in one period of the cohort
// in date order.
func periodRow(c *checker, t mdTable, row []string, i int) {
	p := fmt.Sprintf("over_time.periods[%d].", i)
	where := "period " + row[0]
	if row[0] != c.js.str(p+"label") {
		c.fail("%s: audit.json has period %q", where, c.js.str(p+"label"))
		return
	}
	for j, h := range t.header[1:] {
		cell := row[j+1]
		switch h {
		case "dates":
			want := c.js.str(p + "start")
			if e := c.js.str(p + "end"); e != want {
				want += " to " + e
			}
			if cell != want {
				c.fail("%s dates: %q, audit.json %q", where, cell, want)
			}
		case "n":
			c.cell(where+" n", cell, c.js.num(p+"n"))
		case "events":
			c.cell(where+" events", cell, c.js.num(p+"events"))
		case "expected":
			c.cell(where+" expected", cell, c.js.num(p+"expected"))
		case "O/E (95% CI)", "CITL (95% CI)", "AUC (95% CI)":
			m := strings.ToLower(strings.Fields(h)[0])
			if m == "o/e" {
				m = "oe"
			}
			c.cell(where+" "+h, cell, c.js.num(p+m), c.js.num(p+m+"_ci[0]"), c.js.num(p+m+"_ci[1]"))
		default:
			c.fail("periods: column %q has no rule", h)
		}
	}
}

// cusumRow: a risk-adjusted CUSUM chart's limit, its simulated ARL and
// its signals.
func cusumRow(c *checker, t mdTable, row []string, _ int) {
	where := "CUSUM " + row[0]
	i := -1
	for k := 0; k < c.js.len("over_time.cusum"); k++ {
		if c.js.str(fmt.Sprintf("over_time.cusum[%d].name", k)) == row[0] {
			i = k
		}
	}
	if i < 0 {
		c.fail("%s: no such chart in audit.json", where)
		return
	}
	p := fmt.Sprintf("over_time.cusum[%d].", i)
	for j, h := range t.header[1:] {
		cell := row[j+1]
		switch h {
		case "odds ratio":
			c.cell(where+" odds ratio", cell, c.js.num(p+"limit.odds_ratio"))
		case "limit h (MC SE)":
			c.cell(where+" h", cell, c.js.num(p+"limit.h"), c.js.num(p+"limit.h_mc_se"))
		case "in-control ARL (MC SE)":
			c.cell(where+" ARL", cell, c.js.num(p+"limit.arl"), c.js.num(p+"limit.arl_mc_se"))
		case "runs":
			c.cell(where+" runs", cell, c.js.num(p+"limit.runs"))
		case "signals":
			c.cell(where+" signals", cell, c.js.num(p+"signals"))
		case "first signal":
			if c.js.num(p+"signals") == 0 {
				if cell != "none" {
					c.fail("%s first signal: %q, audit.json has no signal", where, cell)
				}
				continue
			}
			want := c.js.str(p + "first_signal.date")
			if !strings.HasPrefix(cell, want+" ") {
				c.fail("%s first signal: %q, audit.json %q", where, cell, want)
			}
			c.cell(where+" first signal", strings.TrimPrefix(cell, want), c.js.num(p+"first_signal.patient"))
		default:
			c.fail("CUSUM: column %q has no rule", h)
		}
	}
}

// withSiteAndDate copies a CSV file with two generated columns: site,
// one of five names in turn (row i gets name (i·step) mod 5), and
// admitted, a date spread through 2026 in file order.
func withSiteAndDate(t *testing.T, src, dst string, step int) string {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(raw), "\n"), "\n")
	sites := []string{"north", "south", "east", "west", "central"}
	start := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	var b strings.Builder
	b.WriteString(lines[0] + ",site,admitted\n")
	n := len(lines) - 1
	for i, l := range lines[1:] {
		day := start.AddDate(0, 0, i*365/n)
		fmt.Fprintf(&b, "%s,%s,%s\n", l, sites[(i*step)%len(sites)], day.Format("2006-01-02"))
	}
	if err := os.WriteFile(dst, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dst
}

// overTimeLine checks the summary's "over time" line: each CUSUM chart's
// first signal (its date, the patients before it and the count of
// signals) or that it did not signal, and the EWMA's first crossing of
// each limit it crossed (date and patients).
func (c *checker) overTimeLine(where, rest string) {
	rest = strings.TrimPrefix(rest, "time")
	for _, part := range strings.Split(rest, ";") {
		f := strings.Fields(part)
		if len(f) > 0 && f[0] == "EWMA" {
			side := "below"
			if strings.Contains(part, "upper limit") {
				side = "above"
			}
			p := "over_time.ewma.first_" + side + "."
			d := c.js.str(p + "date")
			if c.js.num(p+"patient") == 0 || !strings.Contains(part, " "+d+",") {
				c.fail("%s: %q, audit.json's EWMA first %s is patient %v on %q", where, part, side, c.js.num(p+"patient"), d)
			}
			c.cell(where+" EWMA "+side, strings.Replace(part, d, "", 1), c.js.num(p+"patient"))
			continue
		}
		if len(f) < 2 || f[1] != "chart" {
			c.fail("%s: %q is not a chart's alarms", where, part)
			continue
		}
		i := chartIndex(c.js, f[0])
		if i < 0 {
			c.fail("%s: no chart %q in audit.json", where, f[0])
			continue
		}
		p := fmt.Sprintf("over_time.cusum[%d].", i)
		if c.js.num(p+"signals") == 0 {
			if !strings.Contains(part, "no signal") {
				c.fail("%s: %q, audit.json has no signal", where, part)
			}
			c.cell(where+" "+f[0], part)
			continue
		}
		d := c.js.str(p + "first_signal.date")
		if !strings.Contains(part, " "+d+",") {
			c.fail("%s: %q, audit.json's first signal is on %s", where, part, d)
		}
		want := []float64{c.js.num(p + "first_signal.patient")}
		if strings.Contains(part, "signals)") {
			want = append(want, c.js.num(p+"signals"))
		}
		c.cell(where+" "+f[0], strings.Replace(part, d, "", 1), want...)
	}
}

// checkFitSummary compares the fit summary a fit prints on stdout (the
// demo prints it before its audit) with fit.json: rows, events, the
// Newton steps, every term's row and the fit statistics.
func checkFitSummary(out string, fit jsonDoc) []string {
	c := &checker{js: fit}
	start := strings.Index("\n"+out, "\nFitted: ")
	if start < 0 {
		return []string{"no fit summary on stdout"}
	}
	lines := strings.Split(out[start:], "\n")[1:]
	term := 0
	seen := map[string]bool{}
	for _, line := range lines {
		if strings.HasPrefix(line, "Wrote ") || strings.HasPrefix(line, "Audit of ") {
			break
		}
		l := strings.TrimSpace(line)
		if l == "" || strings.HasPrefix(l, "(") || strings.HasPrefix(l, "term ") {
			continue
		}
		where := "fit summary " + strings.Fields(l)[0]
		if term < c.js.len("terms") {
			p := fmt.Sprintf("terms[%d].", term)
			if name := c.js.str(p + "term"); strings.HasPrefix(l, name+" ") {
				rest := strings.TrimPrefix(l, name)
				want := []float64{c.js.num(p + "coef"), c.js.num(p + "se"), c.js.num(p + "z"), c.js.num(p + "p")}
				if name != "intercept" {
					want = append(want, c.js.num(p+"odds_ratio"), c.js.num(p+"or_ci[0]"), c.js.num(p+"or_ci[1]"))
				}
				c.cell("fit summary term "+name, rest, want...)
				term++
				continue
			}
		}
		label := strings.Fields(l)[0]
		seen[label] = true
		switch label {
		case "data":
			if !strings.Contains(l, c.js.str("data_file")) || !strings.Contains(l, c.js.str("data_sha256")[:16]) {
				c.fail("%s: %q, fit.json %s %s", where, l, c.js.str("data_file"), c.js.str("data_sha256"))
			}
		case "rows":
			want := []float64{c.js.num("rows_read"), c.js.num("n"), c.js.num("rows_excluded")}
			for i := 0; i < c.js.len("excluded_by_column"); i++ {
				want = append(want, c.js.num(fmt.Sprintf("excluded_by_column[%d].rows", i)))
			}
			c.cell(where, strings.TrimPrefix(l, label), want...)
		case "events":
			c.cell(where, strings.TrimPrefix(l, label), c.js.num("events"), c.js.num("n"), c.js.num("events")/c.js.num("n"))
		case "method":
			c.cell(where, strings.TrimPrefix(l, label), c.js.num("iterations"))
		case "converged":
			if !strings.Contains(l, c.js.str("convergence")) {
				c.fail("%s: %q, fit.json %q", where, l, c.js.str("convergence"))
			}
		case "−2":
			c.cell(where, strings.TrimPrefix(l, "−2 log-likelihood"), c.js.num("neg2ll"), c.js.num("null_neg2ll"))
		case "likelihood":
			c.cell(where, strings.TrimPrefix(l, "likelihood ratio"), c.js.num("lr_chi2"), c.js.num("lr_df"), c.js.num("lr_p"))
		case "AIC":
			c.cell(where, strings.Replace(l, "R²", "", 1), c.js.num("aic"), c.js.num("bic"), c.js.num("nagelkerke_r2"))
		case "odds":
			c.unitLine(where, l)
			continue
		case "Hosmer–Lemeshow":
			h := "hosmer_lemeshow."
			c.cell(where, strings.TrimPrefix(l, label), c.js.num(h+"statistic"), c.js.num(h+"df"), c.js.num(h+"p"), c.js.num(h+"groups"))
		default:
			c.fail("%s: line %q has no rule", where, l)
		}
	}
	if term != c.js.len("terms") {
		c.fail("fit summary: %d term rows read, fit.json has %d terms", term, c.js.len("terms"))
	}
	for i := 0; i < c.js.len("terms"); i++ {
		p := fmt.Sprintf("terms[%d].", i)
		if u := c.js.str(p + "unit"); u != "" && !c.unitsSeen[c.js.str(p+"term")] {
			c.fail("fit summary: term %s has the unit %q in fit.json but no odds-ratio unit line", c.js.str(p+"term"), u)
		}
	}
	for _, l := range []string{"rows", "events", "−2", "likelihood", "AIC"} {
		if !seen[l] {
			c.fail("fit summary: no %q line", l)
		}
	}
	return c.problems
}

// unitLine checks one "odds ratios, TERMS: UNIT" line of the fit summary:
// every term it names has exactly that unit in fit.json, so a number in
// the unit (per 10 units of age) is the record's own.
func (c *checker) unitLine(where, l string) {
	rest, ok := strings.CutPrefix(l, "odds ratios, ")
	names, unit, found := strings.Cut(rest, ": ")
	if !ok || !found {
		c.fail("%s: line %q has no rule", where, l)
		return
	}
	if c.unitsSeen == nil {
		c.unitsSeen = map[string]bool{}
	}
	for _, name := range strings.Split(names, ", ") {
		i := 0
		for ; i < c.js.len("terms"); i++ {
			if c.js.str(fmt.Sprintf("terms[%d].term", i)) == name {
				break
			}
		}
		if i == c.js.len("terms") {
			c.fail("%s: %q names the term %q, which fit.json does not have", where, l, name)
			continue
		}
		if got := c.js.str(fmt.Sprintf("terms[%d].unit", i)); got != unit {
			c.fail("%s: %q gives %s the unit %q, fit.json %q", where, l, name, unit, got)
		}
		c.unitsSeen[name] = true
	}
}

// checkWrote compares the count of figures the audit says it wrote with
// audit.json's outputs, and the verdict the audit reports on stderr with
// its criteria.
func checkWrote(stdout, stderr string, js jsonDoc) []string {
	c := &checker{js: js}
	svg := 0
	for i := 0; i < js.len("outputs"); i++ {
		if strings.HasSuffix(js.str(fmt.Sprintf("outputs[%d]", i)), ".svg") {
			svg++
		}
	}
	found := false
	for _, l := range strings.Split(stdout, "\n") {
		if k := strings.Index(l, " figures"); strings.HasPrefix(l, "Wrote ") && k > 0 {
			f := strings.Fields(l[:k])
			c.cell("wrote figures", f[len(f)-1], float64(svg))
			found = true
		}
	}
	if !found {
		c.fail("stdout: no line saying how many figures were written")
	}
	for _, l := range strings.Split(stderr, "\n") {
		if _, rest, ok := strings.Cut(l, ": verdict "); ok {
			rest, _, _ = strings.Cut(rest, " (see ") // the report's path
			f, t, m, n := verdictCounts(js)
			want := []float64{f, t}
			if n > 0 {
				want = append(want, m, n)
			}
			c.cell("stderr verdict", rest, want...)
		}
	}
	return c.problems
}
