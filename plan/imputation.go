package plan

import "go.yaml.in/yaml/v3"

// Imputation is a multiply imputed cohort, from the plan's keys
// imputation_column (the stacked cohort's imputation column, as
// --imputation-column) and imputed (the completed datasets' files, as
// --imputed, instead of cohort):
//
//	imputation_column: imp
//	imputed: [completed_1.csv, completed_2.csv, completed_3.csv]
type Imputation struct {
	Column string
	Files  []string
}

// imputation reads one of the two keys.
func (p *parser) imputation(im *Imputation, key string, v *yaml.Node) error {
	var err error
	switch key {
	case "imputation_column":
		im.Column, err = p.str(v, key)
	case "imputed":
		if im.Files, err = p.strs(v, key); err == nil && len(im.Files) < 2 {
			return p.errf(ErrValue, v, "imputed: give every completed dataset, at least 2 (Rubin's rules need a between-imputation variance)")
		}
	}
	return err
}
