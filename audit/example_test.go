package audit_test

import (
	"context"
	"fmt"
	"log"
	"os"
	"path/filepath"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/scenario"
)

// Audit the invented demo scenario: fit its recipe on the development
// extract, measure the model on the later extract beside the development
// data, and write the report.
func Example() {
	dir, err := os.MkdirTemp("", "riskaudit-example-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	dev, later, recipe := filepath.Join(dir, "development.csv"), filepath.Join(dir, "later.csv"), filepath.Join(dir, "recipe.yaml")
	for path, data := range map[string][]byte{dev: scenario.Development.CSV(), later: scenario.Later.CSV(), recipe: []byte(scenario.Recipe)} {
		if err := os.WriteFile(path, data, 0o644); err != nil {
			log.Fatal(err)
		}
	}

	res, err := audit.Run(context.Background(), audit.Config{
		Model:  recipe,
		Dev:    audit.Input{Path: dev},
		Cohort: audit.Input{Path: later},
	})
	if err != nil {
		log.Fatal(err)
	}
	a := res.Audit
	fmt.Printf("%d of %d patients used, %d events\n", a.Cohort.Used, a.Cohort.Rows, a.Cohort.Events)
	fmt.Printf("AUC %.3f (95%% CI %.3f to %.3f), development %.3f\n", a.Discrimination.AUC, a.Discrimination.CI[0], a.Discrimination.CI[1], a.Development.Apparent.AUC)
	fmt.Printf("O/E %.2f (95%% CI %.2f to %.2f)\n", a.Calibration.OE, a.Calibration.OECI[0], a.Calibration.OECI[1])
	fmt.Printf("verdict %s\n", a.Verdict.Status)

	if _, err := audit.Write(filepath.Join(dir, "audit"), res, audit.WriteOptions{}); err != nil {
		log.Fatal(err)
	}
	// Output:
	// 2772 of 3000 patients used, 476 events
	// AUC 0.736 (95% CI 0.712 to 0.761), development 0.707
	// O/E 1.47 (95% CI 1.36 to 1.60)
	// verdict fail
}
