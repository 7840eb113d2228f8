package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
)

func newTrendCmd(s *streams) *cobra.Command {
	var hist, out string
	c := &cobra.Command{
		Use:   "trend --history FILE --out DIR",
		Short: "Chart the audits in a history store, with control limits for O/E",
		Long: `Read every audit recorded in a history store (audit --history) and write
DIR/trend.md with SVG charts of AUC, O/E, calibration slope and
calibration-in-the-large over the audit dates, each with its 95% interval.
O/E is drawn with funnel-type control limits that account for each audit's
expected events; the first audit outside its 99.8% limits is flagged.`,
		Example: `  riskaudit audit --plan monthly.yaml --history audits.sqlite --audit-date 2026-11-30
  riskaudit trend --history audits.sqlite --out trend`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			t, err := audit.ReadTrend(hist, now)
			if err != nil {
				return err
			}
			w, err := audit.WriteTrend(out, t)
			if err != nil {
				return err
			}
			recs, tr := t.Records, t.Trend
			fmt.Fprintf(s.out, "%d audits from %s to %s\n", len(recs), recs[0].AuditDate, recs[len(recs)-1].AuditDate)
			if tr.FirstOutside >= 0 {
				fmt.Fprintf(s.out, "first audit outside the O/E control limits: %s\n", tr.Points[tr.FirstOutside].Date)
			}
			fmt.Fprintf(s.out, "Wrote %s and %d charts\n", filepath.Join(out, "trend.md"), len(t.Figures))
			replacedNote(s, out, "trend report", w)
			return nil
		},
	}
	c.Flags().StringVar(&hist, "history", "", "the history store (SQLite) that audits append to")
	c.Flags().StringVar(&out, "out", "", "folder for trend.md and the charts")
	_ = c.MarkFlagRequired("history")
	_ = c.MarkFlagRequired("out")
	return c
}
