package plan

import (
	"crypto/sha256"
	"encoding/hex"
	"path/filepath"
	"strings"
	"testing"
)

func TestParseStarterAndPaths(t *testing.T) {
	p, err := Parse(filepath.Join("plans", "monthly.yaml"), []byte(Starter))
	if err != nil {
		t.Fatal(err)
	}
	if p.Model != filepath.Join("plans", "frozen.yaml") || p.Out != filepath.Join("plans", "audits", "2026-11") {
		t.Errorf("paths not taken from the plan's folder: %q %q", p.Model, p.Out)
	}
	if len(p.Criteria) != 6 || p.Criteria[4].Severity != "review" || p.Rename["age_years"] != "age" {
		t.Errorf("plan read wrongly: %+v", p)
	}
	if nb := p.Criteria[5]; nb.Measure != "net_benefit_gain" || nb.Over == nil || *nb.Over != [2]float64{0.05, 0.20} || *nb.AtLeast != 0.001 {
		t.Errorf("net-benefit criterion read wrongly: %+v", nb)
	}
	if len(p.Subgroups) != 1 || len(p.Bands) != 1 || p.Bands[0].String() != "age:65,75" || p.SubgroupCriteria != "review" {
		t.Errorf("subgroups read wrongly: %v %v %q", p.Subgroups, p.Bands, p.SubgroupCriteria)
	}
	if !p.Set["bootstrap.seed"] || p.Seed != 1 {
		t.Errorf("bootstrap seed %v %d", p.Set, p.Seed)
	}
}

func TestPlanErrors(t *testing.T) {
	for _, tt := range []struct{ yaml, want string }{
		{"", "file is empty"},
		{"modle: x\n", `line 1: unknown key "modle" in the plan (did you mean "model"?)`},
		{"bootstrap: {replicats: 5}\n", `line 1: unknown key "replicats" in bootstrap`},
		{"criteria:\n  - measure: slope\n", "line 2: criterion on \"slope\" needs exactly one of"},
		{"criteria:\n  - measure: oe\n    contains: 1\n", "contains needs an interval"},
		{"criteria:\n  - measure: auc\n    at_least: high\n", `line 3: at_least must be a number, not "high"`},
		{"data: {missing: fail, decimal_comma: maybe}\n", "decimal_comma must be true or false"},
		{"data: {sheet: \"\"}\n", "line 1: sheet must name a worksheet"},
		{"sample_size:\n  c_width: 1.5\n", "line 2: c_width must be strictly between 0 and 1, not 1.5"},
		{"sample_size:\n  oe_width: -1\n", "line 2: oe_width must be above 0, not -1"},
		{"sample_size: {threshold: 1}\n", "threshold must be strictly between 0 and 1, not 1"},
		{"sample_size: {widths: 1}\n", `unknown key "widths" in sample_size`},
		{"sample_size:\n  anticipated:\n    event_rate: 0.1\n", "line 3: anticipated: event_rate needs c_statistic"},
		{"sample_size:\n  anticipated: {lp_mean: -2}\n", "line 2: anticipated: lp_mean and lp_sd go together"},
		{"sample_size:\n  anticipated: {lp_mean: -2, lp_sd: 1, event_rate: 0.1, c_statistic: 0.7}\n", "not both"},
		{"sample_size:\n  anticipated: {event_rate: 0.1, c_statistic: 0.4}\n", "c_statistic must be strictly between 0.5 and 1, not 0.4"},
		{"sample_size:\n  anticipated: {calibration_slope: 0}\n", "calibration_slope must be above 0, not 0"},
		{"purpose:\n  settng: ward\n", `line 2: unknown key "settng" in purpose (did you mean "setting"?)`},
		{"purpose:\n  setting: \"  \"\n", "line 2: purpose.setting is empty"},
		{"purpose: [a]\n", "line 1: purpose must be a mapping"},
		// The cohort in date order.
		{"periods: weekly\n", `line 1: periods must be month, quarter or a number of patients a block (at least 2), not "weekly"`},
		{"periods: 1\n", "periods must be month, quarter or a number of patients a block"},
		{"date_column: [a, b]\n", "line 1: date_column must be a single value"},
		// Subgroups, numeric bands and how subgroup checks count.
		{"subgroups: sex\n", "line 1: subgroups must be a list of columns"},
		{"subgroups:\n  - [sex]\n", "line 2: subgroups: each item is a column name or a mapping"},
		{"subgroups:\n  - column: age\n    cuts: [65, x]\n", `line 3: a cut point must be a number, not "x"`},
		{"subgroups:\n  - column: age\n    cuts: [75, 65]\n", `line 3: cuts must increase, but "65" follows 75`},
		{"subgroups:\n  - column: age\n    cuts: [65, 65]\n", `cuts must increase, but "65" follows 65`},
		{"subgroups:\n  - column: age\n    cuts: [inf]\n", `a cut point must be a finite number, not "inf"`},
		{"subgroups:\n  - column: age\n    cuts: []\n", "line 3: cuts must be a list of increasing numbers"},
		{"subgroups:\n  - column: age\n    quantiles: 1\n", "line 3: quantiles is the number of bands, 2 to 20, not 1"},
		{"subgroups:\n  - column: age\n    quantiles: four\n", `quantiles must be a whole number, not "four"`},
		{"subgroups:\n  - column: age\n    cuts: [65]\n    quantiles: 4\n", "line 2: subgroups: subgroup column \"age\": give cut points or a number of quantile bands, not both"},
		{"subgroups:\n  - column: age\n", "give cut points (such as 65,75) or a number of quantile bands"},
		{"subgroups:\n  - cuts: [65]\n", "a banded subgroup needs a column"},
		{"subgroups:\n  - column: age\n    cut: [65]\n", `line 3: unknown key "cut" in a banded subgroup (did you mean "cuts"?)`},
		{"subgroup_criteria: warn\n", `line 1: subgroup_criteria must be review (the default), fail or ignore, not "warn"`},
		// The net-benefit criterion.
		{"criteria:\n  - measure: net_benefit_gain\n    at_least: 0.001\n", "needs over: [from, to]"},
		{"criteria:\n  - measure: net_benefit_gain\n    at_least: 0.001\n    over: [0.2, 0.05]\n", "over needs the lower threshold first"},
		{"criteria:\n  - measure: net_benefit_gain\n    at_least: 0.001\n    over: [0, 0.2]\n", "strictly between 0 and 1"},
		{"criteria:\n  - measure: net_benefit_gain\n    at_least: 0.001\n    over: 0.1\n", "line 4: over takes two risk thresholds: [from, to]"},
		{"criteria:\n  - measure: net_benefit_gain\n    at_most: 0.001\n    over: [0.05, 0.2]\n", "takes at_least"},
		{"criteria:\n  - measure: auc\n    at_least: 0.7\n    over: [0.05, 0.2]\n", "over goes only with net_benefit_gain"},
	} {
		_, err := Parse("p.yaml", []byte(tt.yaml))
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%q: got %v, want %s", tt.yaml, err, tt.want)
		}
	}
}

func TestSampleSizeSection(t *testing.T) {
	p, err := Parse("p.yaml", []byte(`sample_size:
  slope_width: 0.3
  threshold: 0.15
  anticipated:
    event_rate: 0.1
    c_statistic: 0.75
    calibration_slope: 0.9
`))
	if err != nil {
		t.Fatal(err)
	}
	ss := p.SampleSize
	if !p.Set["sample_size.slope_width"] || p.Set["sample_size.oe_width"] || ss.SlopeWidth != 0.3 || ss.Threshold != 0.15 {
		t.Errorf("widths read wrongly: %+v %v", ss, p.Set)
	}
	// The normal linear predictor of a calibrated model with event
	// proportion 0.1 and C-statistic 0.75 (checked in samplesize).
	if !ss.FromEventRate || !(ss.LPSD > 0.5 && ss.LPSD < 1.5) || !(ss.LPMean < -2) {
		t.Errorf("normal linear predictor not found: %+v", ss)
	}
	if ss.CalSlope == nil || *ss.CalSlope != 0.9 || ss.CalIntercept != nil {
		t.Errorf("calibration read wrongly: %+v", ss)
	}
}

// TestPlanNameHashAndPurpose: a plan keeps its name, the SHA-256 of the
// bytes it was read from (computed here again with crypto/sha256) and
// its purpose section.
func TestPlanNameHashAndPurpose(t *testing.T) {
	text := []byte("name: monthly audit\nmodel: m.yaml\npurpose:\n  setting: day-surgery units\n  prediction_horizon: 30 days\n")
	p, err := Parse("p.yaml", text)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(text)
	if p.SHA256 != hex.EncodeToString(sum[:]) || p.Name != "monthly audit" {
		t.Errorf("name %q, SHA-256 %s", p.Name, p.SHA256)
	}
	if p.Purpose.Setting != "day-surgery units" || p.Purpose.PredictionHorizon != "30 days" || p.Purpose.IntendedUse != "" || !p.Set["purpose"] {
		t.Errorf("purpose read as %+v", p.Purpose)
	}
	other, err := Parse("p.yaml", append(text, '\n'))
	if err != nil {
		t.Fatal(err)
	}
	if other.SHA256 == p.SHA256 {
		t.Error("a plan one byte longer has the same SHA-256")
	}
}

// TestClassifyAtPercentHint: a classify_at risk above 1 and below 100
// reads as a percentage typed without its sign, and the error says how
// to write one, as --classify-at and --thresholds do
// (validate.ParseThresholds); 1 and 100 get no hint.
func TestClassifyAtPercentHint(t *testing.T) {
	for _, tt := range []struct{ yaml, want string }{
		{"classify_at: 10\n", `p.yaml: line 1: classify_at: "10" is not strictly between 0 and 1 (a percentage is written with %, as 10%)`},
		{"classify_at: [0.1, 25]\n", `p.yaml: line 1: classify_at: "25" is not strictly between 0 and 1 (a percentage is written with %, as 25%)`},
		{"classify_at:\n  - 0.1\n  - 12.5\n", `p.yaml: line 3: classify_at: "12.5" is not strictly between 0 and 1 (a percentage is written with %, as 12.5%)`},
		{"classify_at: 0.1,20\n", `p.yaml: line 1: classify_at: "20" is not strictly between 0 and 1 (a percentage is written with %, as 20%)`},
		{"classify_at: 1\n", `p.yaml: line 1: classify_at: "1" is not strictly between 0 and 1`},
		{"classify_at: 100\n", `p.yaml: line 1: classify_at: "100" is not strictly between 0 and 1`},
		{"classify_at: 10%\n", ""},
	} {
		_, err := Parse("p.yaml", []byte(tt.yaml))
		got := ""
		if err != nil {
			got = err.Error()
		}
		if got != tt.want {
			t.Errorf("%q: got %q, want %q", tt.yaml, got, tt.want)
		}
	}
}
