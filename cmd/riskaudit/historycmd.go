package main

import (
	"fmt"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/trend"
)

func newHistoryCmd(s *streams) *cobra.Command {
	var store string
	c := &cobra.Command{
		Use:   "history",
		Short: "List and remove the records of a history store",
		Long: `A history store (audit --history FILE) keeps one record per audit: its
date, model (name, SHA-256 and the model it updates), cohort, headline
measures, the criteria it was judged by and the whole audit.json. 'list'
shows the records; 'remove' deletes one by its number, saying which and
how many are left.`,
	}
	c.PersistentFlags().StringVar(&store, "history", "", "the history store (SQLite) that audits append to")
	_ = c.MarkPersistentFlagRequired("history")
	list := &cobra.Command{
		Use:     "list --history FILE",
		Short:   "List every record, by audit date",
		Example: `  riskaudit history list --history audits.sqlite`,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			recs, err := history.Read(store)
			if err != nil {
				return storeError(store, err)
			}
			w := tabwriter.NewWriter(s.out, 2, 4, 2, ' ', 0)
			fmt.Fprintln(w, "record\taudit date\trecorded at\tmodel\tmodel sha256\tupdates\tcohort\tpatients\tevents\tAUC\tO/E\tverdict")
			for _, r := range recs {
				fmt.Fprintf(w, "%d\t%s\t%s\t%s\t%s\t%s\t%s\t%d\t%d\t%s\t%s\t%s\n", r.ID, r.AuditDate, r.RecordedAt, oneLine(r.Model),
					orDash(trend.ShortSHA(r.ModelSHA)), orDash(trend.ShortSHA(r.ParentSHA)), oneLine(r.Cohort),
					r.Used, r.Events, measure(r.AUC[0]), measure(r.OE[0]), r.Verdict)
			}
			if err := w.Flush(); err != nil {
				return err
			}
			models := map[string]bool{}
			for _, r := range recs {
				models[r.Model+"\x00"+r.ModelSHA] = true
			}
			_, err = fmt.Fprintf(s.out, "%d %s of %d %s in %s\n", len(recs), plural(len(recs), "record", "records"),
				len(models), plural(len(models), "model", "models"), store)
			return err
		},
	}
	var id int64
	remove := &cobra.Command{
		Use:     "remove --history FILE --record N",
		Short:   "Remove one record",
		Example: `  riskaudit history remove --history audits.sqlite --record 12`,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			r, left, err := history.Remove(store, id)
			if err != nil {
				return storeError(store, err)
			}
			_, err = fmt.Fprintf(s.out, "Removed record %d (the audit of %s on %s for %s, recorded %s) from %s; %d %s left\n",
				r.ID, trend.ModelOf(r).Short(), r.Cohort, r.AuditDate, r.RecordedAt, store, left, plural(left, "record", "records"))
			return err
		},
	}
	remove.Flags().Int64Var(&id, "record", 0, "the record's number, as 'history list' shows it")
	_ = remove.MarkFlagRequired("record")
	withExitStatuses(list, exitStatus{exitOK, ""}, exitStatus{exitUsage, "wrong usage: an unknown flag or no --history"},
		exitStatus{exitBadInput, "bad input: a history store that cannot be read"},
		exitStatus{exitOtherFailed, stdoutFailed})
	withExitStatuses(remove, exitStatus{exitOK, ""}, exitStatus{exitUsage, "wrong usage: an unknown flag, or no --history or --record"},
		exitStatus{exitBadInput, "bad input: a history store that cannot be read or changed, or that\n     holds no such record"},
		exitStatus{exitOtherFailed, stdoutFailed})
	c.AddCommand(list, remove)
	return withExitStatuses(c, exitStatus{exitOK, groupHelp}, exitStatus{exitUsage, groupUsage})
}

// storeError is a history store that cannot be read or changed: bad
// input (exit status 3), one line.
func storeError(path string, err error) error {
	return &audit.HistoryError{Path: path, Err: err}
}

// orDash is s, or "—" when it is empty.
func orDash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}

// oneLine puts user text on one line of a listing (tabs and line ends
// become spaces).
func oneLine(s string) string {
	return strings.NewReplacer("\t", " ", "\n", " ", "\r", " ").Replace(s)
}

// measure writes a headline measure with three decimals, or "—" when the
// audit could not estimate it.
func measure(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	return fmt.Sprintf("%.3f", v)
}
