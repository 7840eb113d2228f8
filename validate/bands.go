package validate

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/metrics"
)

// MaxQuantileBands is the most bands Banding.Quantiles may ask for.
const MaxQuantileBands = 20

// QuantileDefinition names how the quantile cut points of a Banding are
// found, for the report and audit.json.
const QuantileDefinition = "type 7 of Hyndman & Fan 1996, linear interpolation between order statistics as numpy.quantile does by default, over the audited rows with a value, rounded to 6 significant digits"

// Banding cuts a numeric column into subgroups: at the Cuts given, or at
// the k/Quantiles quantiles (k = 1 … Quantiles − 1) of the audited
// cohort. Exactly one of Cuts and Quantiles is given.
//
// Cuts c₁ < … < cₘ make the m + 1 half-open bands (−∞, c₁), [c₁, c₂), …,
// [cₘ, ∞), labelled "<c₁", "c₁-<c₂", …, ">=cₘ": a value exactly on a cut
// belongs to the band above it. Quantile cut points are found by
// QuantileDefinition (type 7: with the n values sorted and h = (n − 1)q,
// x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋])) and rounded to 6 significant
// digits, so that the labels state the cuts exactly; cut points that
// coincide (tied values) are merged, giving fewer bands. Rows without a
// value form the band MissingLevel.
type Banding struct {
	Column    string
	Cuts      []float64
	Quantiles int
}

// Check refuses a banding without a column, with both or neither of Cuts
// and Quantiles, with cuts that are not finite and strictly increasing,
// or with Quantiles outside 2 … MaxQuantileBands.
func (b Banding) Check() error {
	switch {
	case b.Column == "":
		return fmt.Errorf("a banded subgroup needs a column")
	case len(b.Cuts) > 0 && b.Quantiles != 0:
		return fmt.Errorf("subgroup column %s: give cut points or a number of quantile bands, not both", cohort.Quote(b.Column))
	case len(b.Cuts) == 0 && b.Quantiles == 0:
		return fmt.Errorf("subgroup column %s: give cut points (such as 65,75) or a number of quantile bands (such as q4)", cohort.Quote(b.Column))
	case len(b.Cuts) == 0 && (b.Quantiles < 2 || b.Quantiles > MaxQuantileBands):
		return fmt.Errorf("subgroup column %s: %d quantile bands: give 2 to %d", cohort.Quote(b.Column), b.Quantiles, MaxQuantileBands)
	}
	for i, c := range b.Cuts {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return fmt.Errorf("subgroup column %s: cut point %g is not a finite number", cohort.Quote(b.Column), c)
		}
		if i > 0 && !(c > b.Cuts[i-1]) {
			return fmt.Errorf("subgroup column %s: cut points must increase, but %s follows %s", cohort.Quote(b.Column), FormatCut(c), FormatCut(b.Cuts[i-1]))
		}
	}
	return nil
}

// String writes the banding as the flag --subgroups takes it: "age:65,75"
// or "age:q4".
func (b Banding) String() string {
	if b.Quantiles > 0 {
		return fmt.Sprintf("%s:q%d", b.Column, b.Quantiles)
	}
	s := b.Column + ":"
	for i, c := range b.Cuts {
		if i > 0 {
			s += ","
		}
		s += FormatCut(c)
	}
	return s
}

// Band is the half-open interval [Lower, Upper) of a banded subgroup;
// −∞ and +∞ (null in JSON) are the open ends.
type Band struct {
	Lower float64 `json:"lower"`
	Upper float64 `json:"upper"`
}

// BandInfo describes how a numeric column was banded.
type BandInfo struct {
	Column string `json:"column"`
	// Cuts are the cut points used, after rounding and merging.
	Cuts []float64 `json:"cuts"`
	// Quantiles is the number of quantile bands asked for (0: the cuts
	// were given), QuantileValues the quantiles before rounding and
	// Definition how they are found.
	Quantiles      int       `json:"quantiles,omitempty"`
	QuantileValues []float64 `json:"quantile_values,omitempty"`
	Definition     string    `json:"quantile_definition,omitempty"`
	// Missing counts the audited rows without a value (the band
	// MissingLevel).
	Missing int `json:"missing"`
	// Note says when quantile cut points coincided and were merged.
	Note string `json:"note,omitempty"`
}

// BandColumn cuts the values x of a numeric column (one per audited row,
// NaN where missing) into the bands of b. It fails when b is not valid,
// or when b asks for quantiles and no row has a value.
func BandColumn(x []float64, b Banding) (GroupColumn, BandInfo, error) {
	if err := b.Check(); err != nil {
		return GroupColumn{}, BandInfo{}, err
	}
	info := BandInfo{Column: b.Column, Cuts: slices.Clone(b.Cuts)}
	var have []float64
	for _, v := range x {
		if math.IsNaN(v) {
			info.Missing++
		} else if b.Quantiles > 0 {
			have = append(have, v)
		}
	}
	if b.Quantiles > 0 {
		if len(have) == 0 {
			return GroupColumn{}, BandInfo{}, fmt.Errorf("subgroup column %s has no value in the audited rows, so it has no quantiles", cohort.Quote(b.Column))
		}
		info.Cuts, info.QuantileValues, info.Note = quantileCuts(have, b.Quantiles)
		info.Quantiles, info.Definition = b.Quantiles, QuantileDefinition
	}
	cuts := info.Cuts
	gc := GroupColumn{Name: b.Column, Codes: make([]int32, len(x))}
	for k := 0; k <= len(cuts); k++ {
		band := Band{Lower: math.Inf(-1), Upper: math.Inf(1)}
		var label string
		switch {
		case k == 0:
			band.Upper, label = cuts[0], "<"+FormatCut(cuts[0])
		case k == len(cuts):
			band.Lower, label = cuts[k-1], ">="+FormatCut(cuts[k-1])
		default:
			band.Lower, band.Upper = cuts[k-1], cuts[k]
			label = FormatCut(cuts[k-1]) + "-<" + FormatCut(cuts[k])
		}
		gc.Levels, gc.Bands = append(gc.Levels, label), append(gc.Bands, band)
	}
	for i, v := range x {
		if math.IsNaN(v) {
			gc.Codes[i] = -1
			continue
		}
		// The band is the number of cuts at or below v.
		gc.Codes[i] = int32(sort.Search(len(cuts), func(j int) bool { return cuts[j] > v }))
	}
	return gc, info, nil
}

// quantileCuts returns the k/q quantiles (k = 1 … q − 1) of x by
// definition 7, rounded to 6 significant digits with coinciding ones
// merged, the quantiles before rounding, and a note when some merged.
func quantileCuts(x []float64, q int) (cuts, raw []float64, note string) {
	s := slices.Clone(x)
	sort.Float64s(s)
	for k := 1; k < q; k++ {
		v := metrics.Quantile7(s, float64(k)/float64(q))
		raw = append(raw, v)
		r := round6(v)
		if len(cuts) == 0 || r > cuts[len(cuts)-1] {
			cuts = append(cuts, r)
		}
	}
	if len(cuts) < q-1 {
		var rs []string
		for _, v := range raw {
			rs = append(rs, FormatCut(round6(v)))
		}
		note = fmt.Sprintf("tied values make quantile cut points coincide (%s): %d bands instead of %d", strings.Join(rs, ", "), len(cuts)+1, q)
	}
	return cuts, raw, note
}

// round6 rounds v to 6 significant digits.
func round6(v float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 6, 64), 64)
	return r
}

// FormatCut writes a cut point exactly, in the shortest form that reads
// back as the same number: plain decimals (65, 0.25, 1500000) unless the
// number is very small or very large (1e-07, 1e+21).
func FormatCut(c float64) string {
	if a := math.Abs(c); a == 0 || (a >= 1e-4 && a < 1e15) {
		return strconv.FormatFloat(c, 'f', -1, 64)
	}
	return strconv.FormatFloat(c, 'g', -1, 64)
}
