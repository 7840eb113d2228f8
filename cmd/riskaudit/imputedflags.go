package main

import (
	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
)

// imputedFlags are the audit's options for a multiply imputed cohort.
type imputedFlags struct {
	column string
	files  []string
}

func (m *imputedFlags) register(f *pflag.FlagSet) {
	f.StringVar(&m.column, "imputation-column", "", "the --cohort file stacks completed (multiply imputed) datasets, numbered in this column: measure each and pool by Rubin's rules")
	f.StringArrayVar(&m.files, "imputed", nil, "a completed (imputed) dataset of the cohort, given once per imputation (at least 2, the same patients in the same order) instead of --cohort: measure each and pool by Rubin's rules")
}

// config gives the library's ImputationConfig; the library refuses the
// combinations it cannot audit.
func (m *imputedFlags) config() (audit.ImputationConfig, error) {
	c := audit.ImputationConfig{Column: m.column}
	for _, f := range m.files {
		if f == "" {
			return c, usagef("--imputed: give a file name")
		}
		c.Files = append(c.Files, audit.Input{Path: f})
	}
	return c, nil
}
