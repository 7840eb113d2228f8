package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// This file checks every number report.md and the audit command's summary
// print against the value audit.json holds for it, at the precision
// printed. audit.json is the machine-readable record the report is
// written from, and each of its measures is pinned to outside references
// elsewhere (testdata/reference); this check is what ties the printed
// words to those values, so that a table cell showing the wrong interval
// (the O/E row with the calibration-in-the-large interval, the slope cell
// with its SE) fails. Tables are read by section, row label and column
// label; a table or cell with a number and no rule is itself a failure,
// so a new table must be given its mapping here.

// mdTable is one Markdown table of a report: the section it is under,
// its header cells and its body rows (cells unescaped).
type mdTable struct {
	section string
	header  []string
	rows    [][]string
}

// parseTables reads the tables of a Markdown report.
func parseTables(md string) []mdTable {
	var out []mdTable
	section := ""
	var cur *mdTable
	for _, line := range strings.Split(md, "\n") {
		if strings.HasPrefix(line, "#") {
			section = strings.TrimSpace(strings.TrimLeft(line, "#"))
		}
		if !strings.HasPrefix(line, "|") {
			cur = nil
			continue
		}
		cells := splitRow(line)
		if cur == nil {
			out = append(out, mdTable{section: section, header: cells})
			cur = &out[len(out)-1]
			continue
		}
		if strings.Trim(strings.Join(cells, ""), "-: ") == "" {
			continue // the delimiter row
		}
		cur.rows = append(cur.rows, cells)
	}
	return out
}

func splitRow(line string) []string {
	line = strings.TrimSpace(line)
	line = strings.TrimPrefix(strings.TrimSuffix(line, "|"), "|")
	var cells []string
	var b strings.Builder
	for i := 0; i < len(line); i++ {
		if line[i] == '\\' && i+1 < len(line) {
			b.WriteByte(line[i+1])
			i++
			continue
		}
		if line[i] == '|' {
			cells = append(cells, clean(b.String()))
			b.Reset()
			continue
		}
		b.WriteByte(line[i])
	}
	return append(cells, clean(b.String()))
}

func clean(s string) string {
	s = strings.ReplaceAll(s, "**", "")
	s = strings.ReplaceAll(s, "`", "")
	return strings.TrimSpace(s)
}

// numberToken is one number as printed: its value, its decimals and
// whether it is a percentage or an upper bound ("< 0.0001").
type numberToken struct {
	text     string
	v        float64
	decimals int
	pct      bool
	less     bool
}

// Thousands may be separated by commas ("2,772 patients"); a comma
// followed by a space separates list items ("5%, 10%").
var numberRE = regexp.MustCompile(`(<\s*)?[-+]?(?:\d{1,3}(?:,\d{3})+|\d+)(\.\d+)?%?`)

// numbers lists the numbers of a text in order.
func numbers(s string) []numberToken {
	var out []numberToken
	for _, m := range numberRE.FindAllStringSubmatchIndex(s, -1) {
		tok := s[m[0]:m[1]]
		// A digit glued to a letter ("E50", "bmi'") is part of a word.
		if m[0] > 0 && isLetter(s[m[0]-1]) {
			continue
		}
		t := numberToken{text: tok}
		if m[2] >= 0 {
			t.less = true
			tok = strings.TrimSpace(tok[m[3]-m[0]:])
		}
		if strings.HasSuffix(tok, "%") {
			t.pct = true
			tok = strings.TrimSuffix(tok, "%")
		}
		if i := strings.IndexByte(tok, '.'); i >= 0 {
			t.decimals = len(tok) - i - 1
		}
		t.v, _ = strconv.ParseFloat(strings.ReplaceAll(tok, ",", ""), 64)
		out = append(out, t)
	}
	return out
}

func isLetter(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c == '_' }

// agrees says whether a printed number is v written at its precision.
func (t numberToken) agrees(v float64) bool {
	if t.pct {
		v *= 100
	}
	if t.less {
		return v < t.v
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	half := 0.5 * math.Pow(10, -float64(t.decimals))
	return math.Abs(t.v-v) <= half*(1+1e-9)+1e-12
}

// jsonDoc reads values out of a decoded audit.json by path
// ("calibration.oe_ci[0]", "subgroups[3].auc").
type jsonDoc struct{ root any }

var pathRE = regexp.MustCompile(`[^.\[\]]+|\[\d+\]`)

func (d jsonDoc) get(path string) (any, bool) {
	cur := d.root
	for _, part := range pathRE.FindAllString(path, -1) {
		if strings.HasPrefix(part, "[") {
			i, _ := strconv.Atoi(part[1 : len(part)-1])
			l, ok := cur.([]any)
			if !ok || i >= len(l) {
				return nil, false
			}
			cur = l[i]
			continue
		}
		m, ok := cur.(map[string]any)
		if !ok {
			return nil, false
		}
		if cur, ok = m[part]; !ok {
			return nil, false
		}
	}
	return cur, true
}

// has reports whether the record holds path (with any value, null too).
func (d jsonDoc) has(path string) bool {
	_, ok := d.get(path)
	return ok
}

func (d jsonDoc) num(path string) float64 {
	v, ok := d.get(path)
	if f, isNum := v.(float64); ok && isNum {
		return f
	}
	return math.NaN()
}

func (d jsonDoc) str(path string) string {
	v, _ := d.get(path)
	s, _ := v.(string)
	return s
}

func (d jsonDoc) len(path string) int {
	v, _ := d.get(path)
	l, _ := v.([]any)
	return len(l)
}

// checker gathers the problems found.
type checker struct {
	js       jsonDoc
	problems []string
	// unitsSeen holds the terms named by the fit summary's odds-ratio
	// unit lines.
	unitsSeen map[string]bool
}

func (c *checker) fail(format string, args ...any) {
	c.problems = append(c.problems, fmt.Sprintf(format, args...))
}

// cell checks that the numbers of text are want, in order.
func (c *checker) cell(where, text string, want ...float64) {
	got := numbers(text)
	if len(got) != len(want) {
		c.fail("%s: %q has %d numbers, audit.json gives %d (%v)", where, text, len(got), len(want), want)
		return
	}
	for i, t := range got {
		if !t.agrees(want[i]) {
			c.fail("%s: %q prints %s where audit.json has %.10g", where, text, t.text, want[i])
		}
	}
}

// interval checks a cell "lo to hi" (or an empty cell for no interval).
func (c *checker) ci(where, text, path string) {
	c.cell(where, text, c.js.num(path+"[0]"), c.js.num(path+"[1]"))
}

// col finds a column by its header label.
func col(t mdTable, label string) int {
	for i, h := range t.header {
		if h == label {
			return i
		}
	}
	return -1
}

// rowRule checks one table's rows: row label → cells.
type rowRule func(c *checker, t mdTable, row []string, i int)

// tableRules maps "section|first header" to its rule.
func tableRules() map[string]rowRule {
	return map[string]rowRule{
		"Model audit: *|criterion":                                 verdictRow,
		"Stated purpose|criterion":                                 verdictRow,
		"Cohort|":                                                  cohortRow,
		"Discrimination|measure":                                   discriminationRow,
		"Calibration|measure":                                      calibrationRow,
		"Calibration|risk group":                                   riskGroupRow,
		"Overall accuracy|measure":                                 overallRow,
		"Clinical usefulness|risk threshold":                       netBenefitRow,
		"Clinical usefulness|threshold":                            classificationRow,
		"Was the cohort large enough?|criterion":                   sampleSizeRow,
		"Subgroups|subgroup":                                       subgroupRow,
		"Model updating|model":                                     updateStepRow,
		"Model updating|test against the revision":                 updateTestRow,
		"Development data compared|measure":                        developmentRow,
		"Model fit on the development data|term":                   fitTermRow,
		"Model fit on the development data|statistic":              fitStatisticRow,
		"Internal validation|measure":                              internalRow,
		"Case-mix: development data against this cohort|predictor": caseMixRow,
		"Across *|cluster":                                         clusterRow,
		"Across *|measure":                                         pooledRow,
		"Calibration by *|period":                                  periodRow,
		"Risk-adjusted CUSUM charts|chart":                         cusumRow,
		imputedSectionKey + "|pooled measure":                      imputedPooledRow,
		imputedSectionKey + "|averaged measure":                    imputedAveragedRow,
		imputedSectionKey + "|imputation":                          imputedPerRow,
		imputedSectionKey + "|compared measure":                    imputedCompareRow,
	}
}

// Tables with no numbers of the audit's measures: text the user stated,
// or hashes, times and versions of the provenance.
var wordTables = map[string]bool{"Stated purpose|": true, "Provenance|": true, "Provenance|item": true, "Provenance|input": true}

// checkReport compares every table cell of report.md with audit.json.
func checkReport(md string, js jsonDoc) []string {
	c := &checker{js: js}
	rules := tableRules()
	for _, t := range parseTables(md) {
		key := t.section + "|" + t.header[0]
		switch {
		case strings.HasPrefix(t.section, "Model audit: "):
			key = "Model audit: *|" + t.header[0]
		case strings.HasPrefix(t.section, "Across "):
			// The clusters' section and first column are named by the
			// cluster column ("Across `site`", "site").
			first := t.header[0]
			if first == strings.Trim(strings.TrimPrefix(t.section, "Across "), "`") {
				first = "cluster"
			}
			key = "Across *|" + first
		case strings.HasPrefix(t.section, "Calibration by "):
			key = "Calibration by *|" + t.header[0]
		}
		if strings.HasPrefix(t.section, "Appendix") || wordTables[key] {
			continue
		}
		rule, ok := rules[key]
		if !ok {
			c.fail("table %q (first column %q) has no rule: its numbers are not checked", t.section, t.header[0])
			continue
		}
		for i, row := range t.rows {
			if len(row) != len(t.header) {
				c.fail("%s: row %d has %d cells for %d columns", key, i, len(row), len(t.header))
				continue
			}
			rule(c, t, row, i)
		}
	}
	return c.problems
}

func (c *checker) criterionIndex(measure string) int {
	for i := 0; i < c.js.len("verdict.criteria"); i++ {
		if c.js.str(fmt.Sprintf("verdict.criteria[%d].measure", i)) == measure {
			return i
		}
	}
	return -1
}

func (c *checker) subgroupIndex(column, level string) int {
	for i := 0; i < c.js.len("subgroups"); i++ {
		p := fmt.Sprintf("subgroups[%d].", i)
		if c.js.str(p+"column") == column && c.js.str(p+"level") == level {
			return i
		}
	}
	return -1
}

func verdictRow(c *checker, t mdTable, row []string, _ int) {
	where := "verdict " + row[0]
	measure, group, inGroup := strings.Cut(row[0], " in ")
	var base string
	if inGroup {
		column, level, _ := strings.Cut(group, " = ")
		found := -1
		for i := 0; i < c.js.len("verdict.subgroup_checks"); i++ {
			p := fmt.Sprintf("verdict.subgroup_checks[%d].", i)
			if c.js.str(p+"column") == column && c.js.str(p+"level") == level && c.js.str(p+"measure") == measure {
				found = i
			}
		}
		if found < 0 {
			c.fail("%s: no subgroup check in audit.json", where)
			return
		}
		base = fmt.Sprintf("verdict.subgroup_checks[%d]", found)
		// The check's value is the subgroup's own measure.
		if s := c.subgroupIndex(column, level); s >= 0 {
			sp := fmt.Sprintf("subgroups[%d].", s)
			switch measure {
			case "auc_ci.lower":
				c.cell(where+" (subgroup auc_ci)", row[2], c.js.num(sp+"auc_ci[0]"))
			case "citl", "slope":
				c.cell(where+" (subgroup)", row[2], c.js.num(sp+measure))
			case "oe_ci":
				c.ci(where+" (subgroup)", row[2], sp+"oe_ci")
			}
		}
	} else {
		i := c.criterionIndex(measure)
		if i < 0 {
			c.fail("%s: no criterion in audit.json", where)
			return
		}
		base = fmt.Sprintf("verdict.criteria[%d]", i)
	}
	if row[1] != c.js.str(base+".bound") {
		c.fail("%s: bound %q, audit.json %q", where, row[1], c.js.str(base+".bound"))
	}
	switch {
	case measure == "net_benefit_gain":
		c.cell(where, row[2], c.js.num(base+".value"), c.js.num(base+".at_threshold"))
	case c.js.len(base+".interval") == 2:
		c.ci(where, row[2], base+".interval")
	default:
		c.cell(where, row[2], c.js.num(base+".value"))
	}
	passed, _ := c.js.get(base + ".passed")
	if (row[3] == "met") != (passed == true) {
		c.fail("%s: result %q, audit.json passed=%v", where, row[3], passed)
	}
}

func cohortRow(c *checker, _ mdTable, row []string, _ int) {
	where := "cohort " + row[0]
	switch {
	case row[0] == "rows read":
		c.cell(where, row[1], c.js.num("cohort.rows"))
	case row[0] == "rows used (complete cases)", row[0] == "rows used (each completed dataset)" && c.js.has("imputation"):
		c.cell(where, row[1], c.js.num("cohort.used"))
	case row[0] == "rows left out for missing values":
		c.cell(where, row[1], c.js.num("cohort.excluded"))
	case strings.HasPrefix(row[0], "missing "):
		name := strings.TrimPrefix(row[0], "missing ")
		for i := 0; i < c.js.len("cohort.excluded_by_column"); i++ {
			p := fmt.Sprintf("cohort.excluded_by_column[%d].", i)
			if c.js.str(p+"column") == name {
				c.cell(where, row[1], c.js.num(p+"rows"))
				return
			}
		}
		c.fail("%s: no such column in audit.json", where)
	case row[0] == "events":
		c.cell(where, row[1], c.js.num("cohort.events"), c.js.num("cohort.event_rate"))
	case row[0] == "mean predicted risk":
		c.cell(where, row[1], c.js.num("cohort.mean_risk"))
	default:
		c.fail("%s: row has no rule", where)
	}
}

func discriminationRow(c *checker, _ mdTable, row []string, _ int) {
	where := "discrimination " + row[0]
	switch row[0] {
	case "AUC (c-statistic)":
		c.cell(where, row[1], c.js.num("discrimination.auc"))
		c.ci(where, row[2], "discrimination.auc_ci")
		c.cell(where+" meaning", row[3], c.js.num("discrimination.events"), c.js.num("discrimination.non_events"))
	case "AUC, logit-scale interval":
		c.cell(where, row[1], c.js.num("discrimination.auc"))
		c.ci(where, row[2], "discrimination.auc_logit_ci")
		c.cell(where+" meaning", row[3], 0, 1)
	case "DeLong standard error":
		c.cell(where, row[1], c.js.num("discrimination.auc_se"))
		c.cell(where, row[2])
	default:
		c.fail("%s: row has no rule", where)
	}
}

func calibrationRow(c *checker, _ mdTable, row []string, _ int) {
	where := "calibration " + row[0]
	boot := func(name string) {
		if c.js.len("bootstrap_ci."+name) == 2 {
			c.ci(where, strings.TrimSuffix(row[2], "*"), "bootstrap_ci."+name)
		} else {
			c.cell(where, row[2])
		}
	}
	switch row[0] {
	case "calibration-in-the-large":
		c.cell(where, row[1], c.js.num("calibration.citl"))
		c.ci(where, row[2], "calibration.citl_ci")
		c.cell(where, row[3], 0)
	case "calibration slope":
		c.cell(where, row[1], c.js.num("calibration.slope"))
		c.ci(where, row[2], "calibration.slope_ci")
		c.cell(where, row[3], 1)
	case "observed / expected (O/E)":
		c.cell(where, row[1], c.js.num("calibration.oe"))
		c.ci(where, row[2], "calibration.oe_ci")
		c.cell(where, row[3], 1)
		c.cell(where+" meaning", row[4], c.js.num("calibration.observed_events"), c.js.num("calibration.expected_events"))
	case "Hosmer–Lemeshow χ²":
		c.cell(where, row[1], c.js.num("calibration.hosmer_lemeshow.statistic"))
		c.cell(where, row[2])
		c.cell(where+" meaning", row[4], c.js.num("calibration.hosmer_lemeshow.groups"), c.js.num("calibration.hosmer_lemeshow.df"), c.js.num("calibration.hosmer_lemeshow.p"))
	case "ICI", "E50", "E90", "Emax":
		name := strings.ToLower(row[0])
		c.cell(where, row[1], c.js.num("calibration."+name))
		if name != "emax" {
			boot(name)
		} else {
			c.cell(where, row[2])
		}
		c.cell(where, row[3], 0)
		if name == "e90" {
			c.cell(where+" meaning", row[4], 90)
		}
	default:
		c.fail("%s: row has no rule", where)
	}
}

func riskGroupRow(c *checker, _ mdTable, row []string, i int) {
	where := "risk group " + row[0]
	p := fmt.Sprintf("curves.risk_groups[%d].", i)
	c.cell(where, row[0], float64(i+1))
	c.cell(where, row[1], c.js.num(p+"n"))
	// The range prints "a–b%": the first number carries no % sign.
	rng := numbers(row[2])
	if len(rng) != 2 || !rng[1].agrees(c.js.num(p+"max_risk")) || !rng[0].agrees(100*c.js.num(p+"min_risk")) {
		c.fail("%s: predicted risk %q against %g–%g", where, row[2], c.js.num(p+"min_risk"), c.js.num(p+"max_risk"))
	}
	c.cell(where, row[3], c.js.num(p+"mean_risk"))
	c.cell(where, row[4], c.js.num(p+"observed.value"))
	ci := numbers(row[5])
	if len(ci) != 2 || !ci[0].agrees(c.js.num(p+"observed.ci[0]")) || !ci[1].agrees(c.js.num(p+"observed.ci[1]")) {
		c.fail("%s: observed CI %q against %g–%g", where, row[5], c.js.num(p+"observed.ci[0]"), c.js.num(p+"observed.ci[1]"))
	}
}

func overallRow(c *checker, _ mdTable, row []string, _ int) {
	where := "overall " + row[0]
	switch row[0] {
	case "Brier score":
		c.cell(where, row[1], c.js.num("overall.brier"))
		c.cell(where, row[2])
		c.cell(where+" meaning", row[3], 0)
	case "scaled Brier score":
		c.cell(where, row[1], c.js.num("overall.scaled_brier"))
		if c.js.len("bootstrap_ci.scaled_brier") == 2 {
			c.ci(where, row[2], "bootstrap_ci.scaled_brier")
		} else {
			c.cell(where, row[2])
		}
		c.cell(where+" meaning", row[3], 1, 0)
	default:
		c.fail("%s: row has no rule", where)
	}
}

func netBenefitRow(c *checker, t mdTable, row []string, i int) {
	p := fmt.Sprintf("net_benefit[%d].", i)
	where := "net benefit " + row[0]
	c.cell(where, row[0], c.js.num(p+"threshold"))
	model, all := c.js.num(p+"model"), c.js.num(p+"treat_all")
	gain := model - math.Max(all, 0)
	for j, h := range t.header {
		switch h {
		case "risk threshold":
		case "model":
			c.cell(where+" model", row[j], model)
		case "treat everyone":
			c.cell(where+" treat all", row[j], all)
		case "treat no one":
			c.cell(where+" treat none", row[j], c.js.num(p+"treat_none"))
		case "model gains over the better default":
			c.cell(where+" gain", row[j], gain, 1000*gain, 1000)
		case "95% CI (bootstrap)":
			c.ci(where+" bootstrap CI", row[j], fmt.Sprintf("bootstrap_ci.net_benefit[%d].ci", i))
		case "gain 95% CI (bootstrap)":
			c.ci(where+" gain bootstrap CI", row[j], fmt.Sprintf("bootstrap_ci.net_benefit_gain[%d].ci", i))
		default:
			c.fail("net benefit: column %q has no rule", h)
		}
	}
}

func classificationRow(c *checker, t mdTable, row []string, i int) {
	p := fmt.Sprintf("classification[%d].", i)
	where := "classification " + row[0]
	c.cell(where, row[0], c.js.num(p+"threshold"))
	for j, h := range t.header[1:] {
		cell := row[j+1]
		if h == "flagged" {
			c.cell(where+" flagged", cell, c.js.num(p+"flagged"))
			continue
		}
		q := p + strings.ToLower(h) + "."
		// "74.2% (69.9–78.2)": the interval's ends are percentages too.
		got := numbers(cell)
		want := []float64{c.js.num(q + "value"), c.js.num(q + "ci[0]"), c.js.num(q + "ci[1]")}
		if len(got) != 3 {
			c.fail("%s %s: %q is not a proportion with its interval", where, h, cell)
			continue
		}
		for k := range got {
			got[k].pct = true
			if !got[k].agrees(want[k]) {
				c.fail("%s %s: %q prints %s where audit.json has %.10g", where, h, cell, got[k].text, want[k])
			}
		}
	}
}

func sampleSizeRow(c *checker, _ mdTable, row []string, i int) {
	p := fmt.Sprintf("sample_size.criteria[%d].", i)
	where := "sample size " + row[0]
	if row[0] != c.js.str(p+"measure") || row[1] != c.js.str(p+"target") {
		c.fail("%s: %q %q, audit.json %q %q", where, row[0], row[1], c.js.str(p+"measure"), c.js.str(p+"target"))
	}
	c.cell(where, row[2], c.js.num(p+"n"))
	c.cell(where, row[3], c.js.num(p+"events"))
	met, _ := c.js.get(p + "met")
	if (row[4] == "enough") != (met == true) {
		c.fail("%s: %q, audit.json met=%v", where, row[4], met)
	}
}

func subgroupRow(c *checker, t mdTable, row []string, _ int) {
	where := "subgroup " + row[0]
	label := row[0]
	if k := strings.Index(label, " ("); k >= 0 {
		label = label[:k]
	}
	if k := strings.Index(label, " ["); k >= 0 {
		label = label[:k]
	}
	column, level, _ := strings.Cut(label, " = ")
	s := c.subgroupIndex(column, level)
	if s < 0 {
		c.fail("%s: no such subgroup in audit.json", where)
		return
	}
	p := fmt.Sprintf("subgroups[%d].", s)
	small, _ := c.js.get(p + "too_small")
	for j, h := range t.header {
		m := ""
		switch h {
		case "subgroup", "criteria not met":
			continue
		case "patients":
			c.cell(where+" patients", row[j], c.js.num(p+"n"))
			continue
		case "events":
			c.cell(where+" events", row[j], c.js.num(p+"events"))
			continue
		case "AUC (95% CI)":
			m = "auc"
		case "O/E (95% CI)":
			m = "oe"
		case "CITL (95% CI)":
			m = "citl"
		case "slope (95% CI)":
			m = "slope"
		default:
			c.fail("subgroups: column %q has no rule", h)
			continue
		}
		if small == true {
			continue
		}
		c.cell(where+" "+h, row[j], c.js.num(p+m), c.js.num(p+m+"_ci[0]"), c.js.num(p+m+"_ci[1]"))
	}
}

func (c *checker) stepIndex(method string) int {
	for i := 0; i < c.js.len("update.steps"); i++ {
		if c.js.str(fmt.Sprintf("update.steps[%d].method", i)) == method {
			return i
		}
	}
	return -1
}

func updateStepRow(c *checker, _ mdTable, row []string, _ int) {
	i := c.stepIndex(row[0])
	if i < 0 {
		c.fail("update step %q: not in audit.json", row[0])
		return
	}
	p := fmt.Sprintf("update.steps[%d].", i)
	c.cell("update "+row[0]+" parameters", row[1], c.js.num(p+"parameters"))
	c.cell("update "+row[0]+" −2LL", row[2], c.js.num(p+"neg2ll"))
	c.cell("update "+row[0]+" AIC", row[3], c.js.num(p+"aic"))
}

func updateTestRow(c *checker, _ mdTable, row []string, i int) {
	p := fmt.Sprintf("update.tests[%d].", i)
	where := "update test " + row[0]
	if row[0] != c.js.str(p+"simpler") {
		c.fail("%s: audit.json has %q", where, c.js.str(p+"simpler"))
	}
	c.cell(where+" χ²", row[1], c.js.num(p+"lr_chi2"))
	c.cell(where+" df", row[2], c.js.num(p+"df"))
	c.cell(where+" p", row[3], c.js.num(p+"p"))
	rej, _ := c.js.get(p + "rejected")
	if (row[4] == "rejected") != (rej == true) {
		c.fail("%s: %q, audit.json rejected=%v", where, row[4], rej)
	}
}

func developmentRow(c *checker, _ mdTable, row []string, _ int) {
	paths := map[string]string{
		"AUC": "discrimination.auc", "calibration-in-the-large": "calibration.citl", "calibration slope": "calibration.slope",
		"O/E": "calibration.oe", "ICI": "calibration.ici", "Brier score": "overall.brier", "scaled Brier score": "overall.scaled_brier",
		"event rate": "cohort.event_rate", "mean predicted risk": "cohort.mean_risk",
	}
	where := "development " + row[0]
	path, ok := paths[row[0]]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	dev, now := c.js.num("development.measures."+path), c.js.num(path)
	c.cell(where+" development", row[1], dev)
	c.cell(where+" this cohort", row[2], now)
	d := now - dev
	if strings.Contains(row[3], "points") {
		d *= 100
	}
	// The change is printed from the unrounded values.
	c.cell(where+" change", row[3], d)
}

func fitTermRow(c *checker, _ mdTable, row []string, i int) {
	p := fmt.Sprintf("development.fit.terms[%d].", i)
	where := "fit term " + row[0]
	if row[0] != c.js.str(p+"term") {
		c.fail("%s: audit.json has %q", where, c.js.str(p+"term"))
	}
	c.cell(where+" coef", row[1], c.js.num(p+"coef"))
	c.cell(where+" SE", row[2], c.js.num(p+"se"))
	c.cell(where+" z", row[3], c.js.num(p+"z"))
	c.cell(where+" p", row[4], c.js.num(p+"p"))
	if row[0] == "intercept" {
		c.cell(where+" OR", row[5])
		c.cell(where+" OR CI", row[6])
		return
	}
	c.cell(where+" OR", row[5], c.js.num(p+"odds_ratio"))
	c.ci(where+" OR CI", row[6], p+"or_ci")
}

func fitStatisticRow(c *checker, _ mdTable, row []string, _ int) {
	f := "development.fit."
	where := "fit " + row[0]
	switch row[0] {
	case "rows used (events)":
		c.cell(where, row[1], c.js.num(f+"n"), c.js.num(f+"events"))
	case "−2 log-likelihood":
		c.cell(where, row[1], c.js.num(f+"neg2ll"), c.js.num(f+"null_neg2ll"))
	case "likelihood-ratio χ²":
		c.cell(where, row[1], c.js.num(f+"lr_chi2"), c.js.num(f+"lr_df"), c.js.num(f+"lr_p"))
	case "AIC / BIC":
		c.cell(where, row[1], c.js.num(f+"aic"), c.js.num(f+"bic"))
	case "Nagelkerke R²":
		c.cell(where, row[1], c.js.num(f+"nagelkerke_r2"))
	case "Hosmer–Lemeshow":
		h := f + "hosmer_lemeshow."
		c.cell(where, row[1], c.js.num(h+"statistic"), c.js.num(h+"df"), c.js.num(h+"p"), c.js.num(h+"groups"))
	default:
		c.fail("%s: row has no rule", where)
	}
}

func internalRow(c *checker, _ mdTable, row []string, _ int) {
	names := map[string]string{
		"AUC": "auc", "calibration slope": "slope", "calibration-in-the-large": "citl", "Brier score": "brier",
		"scaled Brier score": "scaled_brier", "Nagelkerke R²": "nagelkerke_r2", "ICI": "ici",
	}
	where := "internal " + row[0]
	name, ok := names[row[0]]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	p := "internal.metrics." + name + "."
	c.cell(where+" apparent", row[1], c.js.num(p+"apparent"))
	c.cell(where+" optimism", row[2], c.js.num(p+"optimism"))
	c.cell(where+" corrected", row[3], c.js.num(p+"corrected"))
	if name == "ici" {
		c.cell(where+" meaning", row[4], c.js.num("internal.ici_delta_share"))
	} else {
		c.cell(where+" meaning", row[4])
	}
}

func caseMixRow(c *checker, _ mdTable, row []string, _ int) {
	where := "case-mix " + row[0]
	column, level, categorical := strings.Cut(row[0], " = ")
	for i := 0; i < c.js.len("case_mix.predictors"); i++ {
		p := fmt.Sprintf("case_mix.predictors[%d].", i)
		if c.js.str(p+"column") != column {
			continue
		}
		k := 0
		if categorical {
			k = -1
			for j := 0; j < c.js.len(p+"levels"); j++ {
				if c.js.str(fmt.Sprintf("%slevels[%d]", p, j)) == level {
					k = j
				}
			}
			if k < 0 {
				c.fail("%s: no such level in audit.json", where)
				return
			}
			c.cell(where+" development", row[1], c.js.num(fmt.Sprintf("%sdevelopment[%d]", p, k)))
			c.cell(where+" this cohort", row[2], c.js.num(fmt.Sprintf("%snew_cohort[%d]", p, k)))
		} else {
			c.cell(where+" development", row[1], c.js.num(p+"development[0]"), c.js.num(p+"development[1]"))
			c.cell(where+" this cohort", row[2], c.js.num(p+"new_cohort[0]"), c.js.num(p+"new_cohort[1]"))
		}
		c.cell(where+" standardised difference", row[3], c.js.num(fmt.Sprintf("%sstd_diff[%d]", p, k)))
		if row[4] != "" || k == 0 {
			c.cell(where+" missing", row[4], c.js.num(p+"development_missing"), c.js.num(p+"new_missing"))
		}
		return
	}
	c.fail("%s: no such predictor in audit.json", where)
}

// checkSummary compares the audit command's summary lines with audit.json.
func checkSummary(out string, js jsonDoc) []string {
	c := &checker{js: js}
	start := strings.Index("\n"+out, "\nAudit of ")
	if start < 0 {
		return []string{"no audit summary on stdout"}
	}
	start--
	seen := map[string]bool{}
	for _, line := range strings.Split(out[start+1:], "\n")[1:] {
		if !strings.HasPrefix(line, "  ") {
			break
		}
		f := strings.Fields(line)
		label, rest := f[0], strings.TrimSpace(strings.TrimPrefix(strings.TrimSpace(line), f[0]))
		seen[label] = true
		where := "summary " + label
		switch label {
		case "patients":
			c.cell(where, rest, js.num("cohort.used"), js.num("cohort.rows"), js.num("cohort.events"), js.num("cohort.event_rate"))
		case "AUC":
			c.cell(where, rest, js.num("discrimination.auc"), 0.95, js.num("discrimination.auc_ci[0]"), js.num("discrimination.auc_ci[1]"))
		case "O/E":
			c.cell(where, rest, js.num("calibration.oe"), 0.95, js.num("calibration.oe_ci[0]"), js.num("calibration.oe_ci[1]"))
		case "CITL":
			c.cell(where, rest, js.num("calibration.citl"), 0.95, js.num("calibration.citl_ci[0]"), js.num("calibration.citl_ci[1]"))
		case "slope":
			c.cell(where, rest, js.num("calibration.slope"), 0.95, js.num("calibration.slope_ci[0]"), js.num("calibration.slope_ci[1]"))
		case "ICI":
			c.cell(where, strings.Replace(rest, "E90", "", 1), js.num("calibration.ici"), js.num("calibration.e90"))
		case "Brier":
			c.cell(where, rest, js.num("overall.brier"), js.num("overall.scaled_brier"))
		case "development":
			c.cell(where, rest, js.num("development.measures.discrimination.auc"), js.num("development.measures.calibration.oe"), js.num("development.measures.calibration.slope"))
		case "verdict":
			if !strings.HasPrefix(rest, js.str("verdict.status")+" ") {
				c.fail("%s: %q, audit.json status %q", where, rest, js.str("verdict.status"))
			}
			failed, total := 0, js.len("verdict.criteria")
			for i := 0; i < total; i++ {
				if v, _ := js.get(fmt.Sprintf("verdict.criteria[%d].passed", i)); v != true {
					failed++
				}
			}
			want := []float64{float64(failed), float64(total)}
			if n := js.len("verdict.subgroup_checks"); n > 0 {
				missed := 0
				for i := 0; i < n; i++ {
					if v, _ := js.get(fmt.Sprintf("verdict.subgroup_checks[%d].passed", i)); v != true {
						missed++
					}
				}
				want = append(want, float64(missed), float64(n))
			}
			c.cell(where, rest, want...)
		case "size":
			c.cell(where, rest, js.num("sample_size.required_n"), js.num("sample_size.have_n"))
		case "over":
			c.overTimeLine(where, rest)
		case "imputed":
			c.imputedLine(where, rest)
		case "missing":
			rows := js.num("cohort.rows")
			c.cell(where, rest, js.num("cohort.excluded"), rows, js.num("cohort.excluded")/rows)
		default:
			c.fail("%s: line has no rule", where)
		}
	}
	for _, l := range []string{"patients", "AUC", "O/E", "CITL", "slope", "ICI", "Brier", "verdict"} {
		if !seen[l] {
			c.fail("summary: no %q line", l)
		}
	}
	return c.problems
}

// printedRun is one audit's report, summary and audit.json.
type printedRun struct {
	name, report, stdout string
	js                   jsonDoc
}

func readRun(t *testing.T, name, dir, stdout string) printedRun {
	t.Helper()
	md, err := os.ReadFile(filepath.Join(dir, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(dir, "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	var root any
	if err := json.Unmarshal(raw, &root); err != nil {
		t.Fatal(err)
	}
	return printedRun{name: name, report: string(md), stdout: stdout, js: jsonDoc{root}}
}

// TestPrintedNumbersMatchJSON runs the demo and an audit with every
// analysis on (bootstrap, ci-bootstrap, categorical and banded subgroups,
// update, history, sample size, the net-benefit criterion), checks every
// number of both reports and summaries against audit.json, and then
// corrupts single cells to prove that the check fails on them.
func TestPrintedNumbersMatchJSON(t *testing.T) {
	dir := t.TempDir()
	ctx := context.Background()
	demo := filepath.Join(dir, "demo")
	var demoOut bytes.Buffer
	if err := runDemo(ctx, demo, &streams{out: &demoOut, err: &bytes.Buffer{}}); err != nil {
		t.Fatal(err)
	}
	var fullOut bytes.Buffer
	// The demo's files with two generated columns: a site (five, in
	// turn) for --cluster and an admission date (through 2026 in file
	// order) for --date-column.
	later := withSiteAndDate(t, filepath.Join(demo, "later.csv"), filepath.Join(dir, "later.csv"), 7)
	development := withSiteAndDate(t, filepath.Join(demo, "development.csv"), filepath.Join(dir, "development.csv"), 3)
	args := []string{"audit", "--model", filepath.Join(demo, "recipe.yaml"), "--cohort", later,
		"--dev", development, "--out", filepath.Join(dir, "full"), "--bootstrap", "20", "--seed", "1",
		"--ci-bootstrap", "20", "--subgroups", "sex,smoker,age:65,75,bmi:q4", "--min-subgroup-events", "20",
		"--update", filepath.Join(dir, "updated.yaml"), "--update-alpha", "0.05", "--update-bootstrap", "20",
		"--history", filepath.Join(dir, "h.sqlite"), "--audit-date", "2026-01-31",
		"--cluster", "site", "--date-column", "admitted", "--cusum-arl", "2000",
		"--thresholds", "0.05:0.30:0.05", "--classify-at", "0.1,0.15,0.3",
		"--plan", pooledPlan(t, dir, "pooled_criteria")}
	var fullErr bytes.Buffer
	if code := run(ctx, args, &streams{out: &fullOut, err: &fullErr}); code != exitOK && code != exitCriterion {
		t.Fatalf("riskaudit audit: exit status %d", code)
	}
	runs := []printedRun{
		readRun(t, "demo", filepath.Join(demo, "audit"), demoOut.String()),
		readRun(t, "every analysis", filepath.Join(dir, "full"), fullOut.String()),
		readRun(t, "imputed demo", filepath.Join(demo, imputedDemoAudit), imputedDemoStdout(t, demoOut.String())),
		imputedClusterRun(t, dir, demo),
	}
	for _, p := range checkWrote(fullOut.String(), fullErr.String(), runs[1].js) {
		t.Errorf("every analysis: %s", p)
	}
	for _, p := range checkWrote(strings.TrimSuffix(demoOut.String(), runs[2].stdout), "", runs[0].js) {
		t.Errorf("demo: %s", p)
	}
	for _, p := range checkWrote(runs[2].stdout, "", runs[2].js) {
		t.Errorf("imputed demo: %s", p)
	}
	fitRaw, err := os.ReadFile(filepath.Join(demo, "fit.json"))
	if err != nil {
		t.Fatal(err)
	}
	var fitRoot any
	if err := json.Unmarshal(fitRaw, &fitRoot); err != nil {
		t.Fatal(err)
	}
	fit := jsonDoc{fitRoot}
	for _, p := range checkFitSummary(demoOut.String(), fit) {
		t.Errorf("demo: %s", p)
	}
	t.Run("corrupt/fit summary odds ratio interval shows the coefficient's", func(t *testing.T) {
		old := fmt.Sprintf("%.4f – %.4f", fit.num("terms[1].or_ci[0]"), fit.num("terms[1].or_ci[1]"))
		out := strings.Replace(demoOut.String(), old, fmt.Sprintf("%.4f – %.4f", fit.num("terms[1].coef_ci[0]"), fit.num("terms[1].coef_ci[1]")), 1)
		if out == demoOut.String() {
			t.Fatalf("cannot plant: no %q", old)
		}
		if len(checkFitSummary(out, fit)) == 0 {
			t.Error("the odds ratio's interval replaced by the coefficient's and the check found nothing")
		}
	})
	t.Run("corrupt/fit summary odds-ratio unit", func(t *testing.T) {
		// The demo scales age by 10 (fit.json terms[].unit); a slip that
		// printed another scale, or dropped a term's unit line, must be found.
		i := strings.Index(demoOut.String(), "  odds ratios, age: per 10 units of age\n")
		if i < 0 {
			t.Fatal("cannot plant: the demo's fit summary has no unit line for age")
		}
		for name, out := range map[string]string{
			"another scale": strings.Replace(demoOut.String(), "age: per 10 units", "age: per 5 units", 1),
			"line dropped":  strings.Replace(demoOut.String(), "  odds ratios, age: per 10 units of age\n", "", 1),
		} {
			if len(checkFitSummary(out, fit)) == 0 {
				t.Errorf("%s: the check found nothing", name)
			}
		}
	})
	for _, r := range runs {
		for _, p := range checkReport(r.report, r.js) {
			t.Errorf("%s report.md: %s", r.name, p)
		}
		for _, p := range checkSummary(r.stdout, r.js) {
			t.Errorf("%s summary: %s", r.name, p)
		}
		prose := checkProse(r.report, r.js)
		for _, p := range prose.problems {
			t.Errorf("%s report.md prose: %s", r.name, p)
		}
		t.Logf("%s: prose rules matched %v; %d numbers matched only some value of audit.json: %v", r.name, prose.fired, len(prose.leftover), prose.leftover)
		// Every section the full audit has must have been read.
		for _, s := range []string{"Subgroups", "Model updating", "Was the cohort large enough?", "Internal validation", "Across `site`", "Performance over time"} {
			if r.name == "every analysis" && !strings.Contains(r.report, "## "+s+"\n") {
				t.Errorf("%s: no section %q to check", r.name, s)
			}
		}
	}

	// Single-cell corruptions a slip in report.go could make: each must
	// be found. Each names the row's start and the text swapped in it.
	full := runs[1]
	js := full.js
	f3 := func(p string) string { return fmt.Sprintf("%.3f", js.num(p)) }
	f4 := func(p string) string { return fmt.Sprintf("%.4f", js.num(p)) }
	ci3 := func(p string) string { return f3(p+"[0]") + " to " + f3(p+"[1]") }
	for _, m := range []struct{ name, row, old, new string }{
		{"O/E row with the CITL interval", "| observed / expected (O/E)", ci3("calibration.oe_ci"), ci3("calibration.citl_ci")},
		{"slope cell with its SE", "| calibration slope ", "| " + f3("calibration.slope") + " ", "| " + f3("calibration.slope_se") + " "},
		{"AUC row with the logit interval", "| AUC (c-statistic)", ci3("discrimination.auc_ci"), ci3("discrimination.auc_logit_ci")},
		{"treat-all as the model's net benefit", "| 20.0% ", f4("net_benefit[3].treat_all"), f4("net_benefit[3].model")},
		{"gain against a negative treat-all", "| 20.0% ", fmt.Sprintf("+%.4f", js.num("net_benefit[3].model")), fmt.Sprintf("+%.4f", js.num("net_benefit[3].model")-js.num("net_benefit[3].treat_all"))},
		{"AIC column showing −2LL", "| recalibration in the large |", fmt.Sprintf("%.3f ", js.num("update.steps[1].aic")), fmt.Sprintf("%.3f ", js.num("update.steps[1].neg2ll"))},
		{"subgroup O/E interval", "| `sex` = `F`", fmt.Sprintf("%.2f (%.2f", js.num("subgroups[0].oe"), js.num("subgroups[0].oe_ci[0]")), fmt.Sprintf("%.2f (%.2f", js.num("subgroups[0].oe"), js.num("subgroups[0].citl_ci[0]"))},
		{"cluster AUC with the CITL's SE", "| `" + js.str("clusters.per_cluster[0].cluster") + "`", fmt.Sprintf("(%.3f)", js.num("clusters.per_cluster[0].auc_se")), fmt.Sprintf("(%.3f)", js.num("clusters.per_cluster[0].citl_se"))},
		{"pooled O/E prediction interval as its CI", "| O/E ", fmt.Sprintf("| %.2f to %.2f ", js.num("clusters.pooled.oe.prediction_interval[0]"), js.num("clusters.pooled.oe.prediction_interval[1]")), fmt.Sprintf("| %.2f to %.2f ", js.num("clusters.pooled.oe.ci[0]"), js.num("clusters.pooled.oe.ci[1]"))},
		{"period O/E with the CITL interval", "| " + js.str("over_time.periods[2].label"), ci3("over_time.periods[2].oe_ci"), ci3("over_time.periods[2].citl_ci")},
		{"CUSUM limit's SE as the ARL's", "| " + js.str("over_time.cusum[0].name"), fmt.Sprintf("(%.0f)", js.num("over_time.cusum[0].limit.arl_mc_se")), fmt.Sprintf("(%.0f)", 1000*js.num("over_time.cusum[0].limit.h_mc_se"))},
	} {
		t.Run("corrupt/"+m.name, func(t *testing.T) {
			md, ok := replaceInRow(full.report, m.row, m.old, m.new)
			if !ok || m.old == m.new {
				t.Fatalf("cannot plant %q: no row %q with %q", m.name, m.row, m.old)
			}
			if len(checkReport(md, js)) == 0 {
				t.Errorf("%s planted in report.md and the check found nothing", m.name)
			}
		})
	}
	for _, m := range []struct{ name, old, new string }{
		{"stdout AUC lower end replaced by the SE", "95% CI " + f3("discrimination.auc_ci[0]"), "95% CI " + f3("discrimination.auc_se")},
		{"stdout O/E with CITL interval", ci3("calibration.oe_ci"), ci3("calibration.citl_ci")},
		{"stdout first signal one patient late", fmt.Sprintf("after %d patients", int(js.num("over_time.cusum[0].first_signal.patient"))), fmt.Sprintf("after %d patients", int(js.num("over_time.cusum[0].first_signal.patient"))+1)},
	} {
		t.Run("corrupt/"+m.name, func(t *testing.T) {
			out := strings.Replace(full.stdout, m.old, m.new, 1)
			if out == full.stdout {
				t.Fatalf("cannot plant %q", m.name)
			}
			if len(checkSummary(out, js)) == 0 {
				t.Errorf("%s planted on stdout and the check found nothing", m.name)
			}
		})
	}
	plantProse(t, full)
	plantImputed(t, runs[2])
	plantPooled(t, full)
	plantPooled(t, runs[3])
}

// TestPrintedNumbersMatchJSON's prose corruptions run inside it (the
// audits take a while): see plantProse.

// replaceInRow replaces old by new once in the first line starting with row.
func replaceInRow(md, row, old, new string) (string, bool) {
	lines := strings.Split(md, "\n")
	for i, l := range lines {
		if strings.HasPrefix(l, row) && strings.Contains(l, old) {
			lines[i] = strings.Replace(l, old, new, 1)
			return strings.Join(lines, "\n"), true
		}
	}
	return md, false
}
