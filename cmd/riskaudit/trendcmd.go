package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
)

func newTrendCmd(s *streams) *cobra.Command {
	var hist, out, model string
	c := &cobra.Command{
		Use:   "trend --history FILE --out DIR",
		Short: "Chart the audits in a history store, a series per model, with control limits for O/E",
		Long: `Read the audits recorded in a history store (audit --history) and write
DIR/trend.md, DIR/trend.html (the same, as one page for the browser),
DIR/trend.json and SVG charts of AUC, O/E, calibration slope and
calibration-in-the-large on a time axis of the audit dates, each audit
with its 95% interval.

Each model (its name and the SHA-256 of its file) is a series of its own;
the date a new model entered is marked on every chart, and a model updated
by 'audit --update' is named as the update of the model it came from.
--model keeps one model's audits (by name, or by the first six or more hex
digits of its SHA-256, as 'history list' shows it).

O/E is drawn with funnel-type control limits that account for each audit's
expected events; each model's first audit outside its 99.8% limits is
flagged. The acceptance criteria each audit was judged by are drawn as
bounds. The history store is only read.`,
		Example: `  riskaudit audit --plan monthly.yaml --history audits.sqlite --audit-date 2026-11-30
  riskaudit trend --history audits.sqlite --out trend
  riskaudit trend --history audits.sqlite --model ca7415d9 --out trend-current`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			t, err := audit.ReadTrend(hist, audit.TrendOptions{Model: model, Clock: now})
			if err != nil {
				return err
			}
			w, err := audit.WriteTrend(out, t)
			if err != nil {
				return err
			}
			writeTrendSummary(s, t)
			fmt.Fprintf(s.out, "Wrote %s, %s, %s and %d charts\n", filepath.Join(out, "trend.md"), filepath.Join(out, "trend.html"), filepath.Join(out, "trend.json"), len(t.Figures))
			replacedNote(s, out, "trend report", w)
			return nil
		},
	}
	c.Flags().StringVar(&hist, "history", "", "the history store (SQLite) that audits append to")
	c.Flags().StringVar(&out, "out", "", "folder for trend.md, trend.html, trend.json and the charts")
	c.Flags().StringVar(&model, "model", "", "only the audits of this model: its name, or the start of its SHA-256 (6+ hex digits)")
	_ = c.MarkFlagRequired("history")
	_ = c.MarkFlagRequired("out")
	return withExitStatuses(c, exitStatus{exitOK, ""},
		exitStatus{exitUsage, "wrong usage: an unknown flag, a missing option, a --model that matches\n     no model of the store, or an --out the files on disk refuse"},
		exitStatus{exitBadInput, "bad input: a history store that cannot be read"},
		exitStatus{exitOtherFailed, ""})
}

// writeTrendSummary prints the trend's audits, models, model changes and
// each model's first audit outside the O/E control limits.
func writeTrendSummary(s *streams, t *audit.Trend) {
	tr := t.Trend
	pts := tr.Points
	fmt.Fprintf(s.out, "%d %s of %d %s from %s to %s\n", len(pts), plural(len(pts), "audit", "audits"),
		len(tr.Series), plural(len(tr.Series), "model", "models"), pts[0].Date, pts[len(pts)-1].Date)
	for i, ser := range tr.Series {
		fmt.Fprintf(s.out, "  model %d  %s: %d %s, %s to %s", i+1, ser.Model.Short(), len(ser.Points), plural(len(ser.Points), "audit", "audits"),
			pts[ser.Points[0]].Date, pts[ser.Points[len(ser.Points)-1]].Date)
		if ser.Parent >= 0 {
			fmt.Fprintf(s.out, ", update of model %d", ser.Parent+1)
		}
		fmt.Fprintln(s.out)
	}
	for _, c := range tr.Changes {
		fmt.Fprintf(s.out, "model %d enters on %s, after model %d\n", c.Series+1, pts[c.Point].Date, c.Before+1)
	}
	for i, ser := range tr.Series {
		if ser.FirstOutside < 0 {
			continue
		}
		who := ""
		if len(tr.Series) > 1 {
			who = fmt.Sprintf(" of model %d", i+1)
		}
		fmt.Fprintf(s.out, "first audit%s outside the O/E control limits: %s\n", who, pts[ser.FirstOutside].Date)
	}
}

// plural is one or many by n.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
