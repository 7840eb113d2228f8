package pgcohort_test

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/jackc/pgx/v5"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/scenario"
)

// demoReqs are the columns the demo model reads: 7 predictors and the
// outcome.
var demoReqs = []cohort.Request{{Name: "ppc_30d", Kind: cohort.Categorical}, {Name: "age", Kind: cohort.Numeric},
	{Name: "sex", Kind: cohort.Categorical}, {Name: "bmi", Kind: cohort.Numeric}, {Name: "smoker", Kind: cohort.Categorical},
	{Name: "albumin", Kind: cohort.Numeric}, {Name: "op_minutes", Kind: cohort.Numeric}, {Name: "lung_disease", Kind: cohort.Categorical}}

// bench1M writes the 1M-row demo extract as CSV and loads the same rows
// into the table bench_1m (typed as the demo tables, all 9 columns),
// once per server; it returns the CSV's path.
func bench1M(b *testing.B) string {
	url := pgURL(b)
	big := scenario.Later
	big.Rows = 1_000_000
	data := big.CSV()
	path := filepath.Join(b.TempDir(), "big.csv")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, url)
	if err != nil {
		b.Fatal(err)
	}
	defer conn.Close(ctx)
	var n int
	if err := conn.QueryRow(ctx, "SELECT count(*) FROM pg_tables WHERE tablename = 'bench_1m'").Scan(&n); err != nil {
		b.Fatal(err)
	}
	if n == 1 {
		return path
	}
	for _, sql := range []string{
		`CREATE TEMP TABLE bench_raw (patient_ref text, age text, sex text, bmi text, smoker text, albumin text, op_minutes text, lung_disease text, ppc_30d text)`,
	} {
		if _, err := conn.Exec(ctx, sql); err != nil {
			b.Fatal(err)
		}
	}
	if _, err := conn.PgConn().CopyFrom(ctx, bytes.NewReader(data), "COPY bench_raw FROM STDIN WITH (FORMAT csv, HEADER true)"); err != nil {
		b.Fatal(err)
	}
	if _, err := conn.Exec(ctx, `CREATE TABLE bench_1m AS
SELECT patient_ref, age::integer AS age, sex::char(1) AS sex, NULLIF(NULLIF(bmi, 'NA'), '')::real AS bmi, smoker::smoking AS smoker,
       NULLIF(NULLIF(albumin, 'NA'), '')::numeric(4,1) AS albumin, op_minutes::integer AS op_minutes, lung_disease, ppc_30d
FROM bench_raw`); err != nil {
		b.Fatal(err)
	}
	if _, err := conn.Exec(ctx, "ANALYZE bench_1m"); err != nil {
		b.Fatal(err)
	}
	return path
}

// BenchmarkQuery1M reads the demo model's 8 columns of the 1M-row
// cohort from the local server (every column of the 9 hashed), and
// BenchmarkQuery1MCSV the same rows from the CSV file, for comparison.
func BenchmarkQuery1M(b *testing.B) {
	bench1M(b)
	q := newQuery(b, "SELECT * FROM bench_1m")
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		fr, err := q.Load(context.Background(), demoReqs, cohort.Options{})
		if err != nil {
			b.Fatal(err)
		}
		if fr.Rows != 1_000_000 {
			b.Fatalf("%d rows", fr.Rows)
		}
	}
}

// BenchmarkQuery1MCSV reads the same 1M rows from CSV (see
// BenchmarkQuery1M).
func BenchmarkQuery1MCSV(b *testing.B) {
	path := bench1M(b)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := cohort.Load(path, demoReqs, cohort.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
