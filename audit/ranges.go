package audit

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// outOfRange checks every numeric predictor column of spec in the
// scored rows of fr: against the development range the spec states for
// it, or, without one, for missing-value codes far beyond the column's
// other values. One pass over each column's scored values, no sort.
func outOfRange(spec *model.Spec, fr *cohort.Frame, rows []int) []validate.OutOfRange {
	var out []validate.OutOfRange
	for _, q := range spec.Columns(false) {
		if q.Kind != cohort.Numeric {
			continue
		}
		col := fr.Column(q.Name)
		if col == nil {
			continue
		}
		if rng := statedRange(spec, q.Name); rng != nil {
			out = append(out, beyondRange(fr, col, rows, *rng)...)
		} else {
			out = append(out, missingCodesIn(fr, col, rows)...)
		}
	}
	return out
}

// statedRange is the development range the spec states for column, or
// nil.
func statedRange(spec *model.Spec, column string) *model.Range {
	for _, pr := range spec.Predictors {
		if pr.Column == column && pr.Range != nil {
			return pr.Range
		}
	}
	return nil
}

// extreme is the most extreme value seen on one side, with the frame row
// of its first occurrence and the count of rows on that side.
type extreme struct {
	rows  int
	value float64
	at    int
}

// beyondRange counts the values of col in rows above and below rng.
func beyondRange(fr *cohort.Frame, col *cohort.Column, rows []int, rng model.Range) []validate.OutOfRange {
	var hi, lo extreme
	x := col.Num
	for _, i := range rows {
		switch v := x[i]; {
		case v > rng.Max:
			if hi.rows == 0 || v > hi.value {
				hi.value, hi.at = v, i
			}
			hi.rows++
		case v < rng.Min:
			if lo.rows == 0 || v < lo.value {
				lo.value, lo.at = v, i
			}
			lo.rows++
		}
	}
	var out []validate.OutOfRange
	if hi.rows > 0 {
		out = append(out, warning(fr, col.Name, validate.BasisDevelopmentRange, "above", rng.Max, hi))
	}
	if lo.rows > 0 {
		out = append(out, warning(fr, col.Name, validate.BasisDevelopmentRange, "below", rng.Min, lo))
	}
	return out
}

// missingCodes are the values a registry commonly writes for a value
// not recorded, in the order they are reported (codeIndex's order).
var missingCodes = [...]float64{9, 99, 999, 9999, -1, -9, -99, -999}

// codeIndex is the position of v in missingCodes, or −1. Most values
// are rejected by a range test and an integer conversion; the rest by a
// switch on the integer.
func codeIndex(v float64) int {
	if v > 9999 || v < -999 {
		return -1
	}
	n := int(v)
	if float64(n) != v {
		return -1
	}
	switch n {
	case 9:
		return 0
	case 99:
		return 1
	case 999:
		return 2
	case 9999:
		return 3
	case -1:
		return 4
	case -9:
		return 5
	case -99:
		return 6
	case -999:
		return 7
	}
	return -1
}

// missingCodesIn names each missing-value code among the values of col
// in rows that lies beyond the range of the column's other values (the
// values that are not codes) by more than that range's own span: 999
// in ages of 18 to 97, −1 in counts of 3 to 40, not 99 in ages of 18
// to 101 nor 9 among values of 2 to 15.
func missingCodesIn(fr *cohort.Frame, col *cohort.Column, rows []int) []validate.OutOfRange {
	var codes [len(missingCodes)]extreme
	others := 0
	lo, hi := math.Inf(1), math.Inf(-1)
	x := col.Num
	for _, i := range rows {
		v := x[i]
		if k := codeIndex(v); k >= 0 {
			if codes[k].rows == 0 {
				codes[k].value, codes[k].at = v, i
			}
			codes[k].rows++
			continue
		}
		// Plain comparisons: the scored values hold no NaN, and
		// math.Min and Max's care for NaN and −0 cost a third of the pass.
		others++
		if v < lo {
			lo = v
		}
		if v > hi {
			hi = v
		}
	}
	if others == 0 {
		return nil
	}
	span := hi - lo
	var out []validate.OutOfRange
	for _, c := range codes {
		switch {
		case c.rows == 0:
		case c.value > hi && c.value-hi > span:
			out = append(out, warning(fr, col.Name, validate.BasisMissingCode, "above", hi, c))
		case c.value < lo && lo-c.value > span:
			out = append(out, warning(fr, col.Name, validate.BasisMissingCode, "below", lo, c))
		}
	}
	return out
}

// warning makes the warning of one side of one column.
func warning(fr *cohort.Frame, column, basis, side string, bound float64, e extreme) validate.OutOfRange {
	w := validate.OutOfRange{File: fr.File, Column: column, Basis: basis, Side: side, Bound: bound, Rows: e.rows, Value: e.value, Line: fr.Line(e.at)}
	where := fmt.Sprintf("line %d", w.Line)
	if fr.RowNumbered {
		where = fmt.Sprintf("row %d", w.Line)
	}
	rows := "rows"
	if e.rows == 1 {
		rows = "row"
	}
	v, b := strconv.FormatFloat(e.value, 'g', -1, 64), strconv.FormatFloat(bound, 'g', -1, 64)
	if basis == validate.BasisDevelopmentRange {
		end := "maximum"
		if side == "below" {
			end = "minimum"
		}
		w.Text = fmt.Sprintf("%s: %d %s %s the development %s %s, e.g. %s on %s of %s", column, e.rows, rows, side, end, b, v, where, fr.File)
		if codeIndex(e.value) >= 0 {
			w.Text += " (if " + v + " is a missing-value code, list it with --na-values)"
		}
		return w
	}
	most := "at most"
	if side == "below" {
		most = "at least"
	}
	w.Text = fmt.Sprintf("%s: %d %s hold %s, far %s the column's other values (%s %s), first on %s of %s: if %s is a missing-value code, list it with --na-values",
		column, e.rows, rows, v, side, most, b, where, fr.File, v)
	return w
}

// outOfRangeFinding is the summary's finding on the warnings, or false
// when there are none.
func outOfRangeFinding(ws []validate.OutOfRange) (validate.Finding, bool) {
	if len(ws) == 0 {
		return validate.Finding{}, false
	}
	texts := make([]string, len(ws))
	for k, w := range ws {
		texts[k] = w.Text
	}
	return validate.Finding{Area: "predictor values out of range", Text: "Some predictor values of the cohort lie beyond the data the model was developed on, or look like codes for a value not recorded: " +
		strings.Join(texts, "; ") + ". The model scored them as values, so those patients' risks rest on an extrapolation (or on a code read as a measurement); the measures above include them unchanged."}, true
}
