package plan

import (
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
	if len(p.Criteria) != 5 || p.Criteria[4].Severity != "review" || p.Rename["age_years"] != "age" {
		t.Errorf("plan read wrongly: %+v", p)
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
