package main

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/scenario"
)

// imputedDemoFile and imputedDemoAudit are the demo's multiply imputed
// extract and its audit folder, under the demo's folder.
const (
	imputedDemoFile  = "later_imputed.csv"
	imputedDemoAudit = "audit_imputed"
)

// runImputedDemo writes the later extract with values missing at random,
// completed scenario.LaterMissing.M times by the scenario's imputer and
// stacked in one file, and audits the frozen model on it, pooling by
// Rubin's rules.
func runImputedDemo(ctx context.Context, dir, frozen string, sub func(args ...string) error, s *streams) error {
	ms := scenario.LaterMissing
	path := filepath.Join(dir, imputedDemoFile)
	if err := atomicfile.WriteAll(dir, []atomicfile.File{{Path: path, Data: ms.Stacked()}}); err != nil {
		return err
	}
	fmt.Fprintf(s.out, "\nThe later extract again, with more BMI and albumin values missing at random and completed %d times by chained equations (invented, seeded): wrote %s\n\n", ms.M, path)
	err := sub("audit", "--model", frozen, "--cohort", path, "--imputation-column", scenario.ImputationColumn,
		"--cluster", "hospital", "--out", filepath.Join(dir, imputedDemoAudit))
	var ce *criterionError
	if errors.As(err, &ce) {
		fmt.Fprintf(s.out, "\nPooled across the imputations, the drifted extract again does not meet the default criteria (verdict %s); read %s.\n", ce.status, ce.report)
		return nil
	}
	return err
}
