package audit_test

import (
	"bytes"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/scenario"
	"github.com/riskaudit/riskaudit/validate"
)

// stackedImputations writes m imputations of an n-row extract, stacked
// with an imputation column first and a site column (of clusters sites)
// last: each imputation is the extract with every fourth patient's BMI
// and albumin redrawn (standing in for imputed values; the benchmark
// times the audit, not an imputer).
func stackedImputations(b *testing.B, path string, n, m, clusters int) {
	b.Helper()
	ex := scenario.Later
	ex.Rows, ex.MissingRate = n, 0
	lines := bytes.Split(bytes.TrimRight(ex.CSV(), "\n"), []byte("\n"))
	r := rand.New(rand.NewPCG(1, 2))
	var buf bytes.Buffer
	buf.Grow(m * len(lines) * 70)
	buf.WriteString("imputation," + string(lines[0]) + ",site\n")
	for j := 1; j <= m; j++ {
		for i, l := range lines[1:] {
			f := bytes.Split(l, []byte(","))
			if i%4 == 0 {
				f[3] = strconv.AppendFloat(nil, float64(int(200+r.Float64()*150))/10, 'f', -1, 64)
				f[5] = strconv.AppendFloat(nil, float64(int(300+r.Float64()*200))/10, 'f', -1, 64)
			}
			fmt.Fprintf(&buf, "%d,%s,site%02d\n", j, bytes.Join(f, []byte(",")), i%clusters)
		}
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		b.Fatal(err)
	}
}

// benchImputed audits m imputations of n rows across 50 sites: every
// imputation scored and measured, the measures pooled by Rubin's rules,
// within each site across imputations and then across sites, figures,
// report and JSON written.
func benchImputed(b *testing.B, n, m int) {
	d := fixture.WriteDemo(b, b.TempDir())
	stacked := filepath.Join(d.Dir, "stacked.csv")
	stackedImputations(b, stacked, n, m, 50)
	cfg := audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: stacked}, Measures: validate.Options{Delta: validate.AutoDelta},
		GCPercent: 25, Imputation: audit.ImputationConfig{Column: "imputation"}, Clusters: audit.ClusterConfig{Column: "site"}}
	out := filepath.Join(b.TempDir(), "audit")
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := audit.Run(context.Background(), cfg)
		if err != nil {
			b.Fatal(err)
		}
		if res.Audit.Imputation.M != m || len(res.Audit.Clusters.PerCluster) != 50 {
			b.Fatalf("%d imputations, %d clusters", res.Audit.Imputation.M, len(res.Audit.Clusters.PerCluster))
		}
		if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n*m), "ns/row")
}

// BenchmarkImputed20x100k is the case: 50 clusters × 20
// imputations of 100,000 patients (2M stacked rows).
func BenchmarkImputed20x100k(b *testing.B) { benchImputed(b, 100_000, 20) }

// BenchmarkImputed10x100k has half the imputations, and
// BenchmarkImputed20x50k half the patients: with a time linear in the
// total rows, each takes about half of BenchmarkImputed20x100k's.
func BenchmarkImputed10x100k(b *testing.B) { benchImputed(b, 100_000, 10) }

// BenchmarkImputed20x50k: see BenchmarkImputed10x100k.
func BenchmarkImputed20x50k(b *testing.B) { benchImputed(b, 50_000, 20) }
