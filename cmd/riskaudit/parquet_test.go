package main

import (
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/scenario"
	"github.com/riskaudit/riskaudit/validate"
)

// demoColumns are the demo extract's columns and how they are typed in
// the Parquet copy.
var demoColumns = []struct {
	name    string
	numeric bool
}{{"age", true}, {"sex", false}, {"bmi", true}, {"smoker", false}, {"albumin", true},
	{"op_minutes", true}, {"lung_disease", false}, {"ppc_30d", false}}

// toParquet writes the CSV extract as a typed Parquet file: numbers as
// float64 with nulls for missing values, categories as strings.
func toParquet(t testing.TB, csvPath, pqPath string, rowGroup int64) {
	t.Helper()
	var reqs []cohort.Request
	for _, c := range demoColumns {
		k := cohort.Categorical
		if c.numeric {
			k = cohort.Numeric
		}
		reqs = append(reqs, cohort.Request{Name: c.name, Kind: k})
	}
	fr, err := cohort.Load(csvPath, reqs, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var fields []arrow.Field
	for _, c := range demoColumns {
		typ := arrow.DataType(arrow.BinaryTypes.String)
		if c.numeric {
			typ = arrow.PrimitiveTypes.Float64
		}
		fields = append(fields, arrow.Field{Name: c.name, Type: typ, Nullable: true})
	}
	schema := arrow.NewSchema(fields, nil)
	f, err := os.Create(pqPath)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(schema, f, parquet.NewWriterProperties(), pqarrow.DefaultWriterProps())
	if err != nil {
		t.Fatal(err)
	}
	mem := memory.DefaultAllocator
	for lo := 0; lo < fr.Rows; lo += int(rowGroup) {
		hi := min(fr.Rows, lo+int(rowGroup))
		b := array.NewRecordBuilder(mem, schema)
		for j, c := range demoColumns {
			col := fr.Column(c.name)
			for i := lo; i < hi; i++ {
				if col.IsMissing(i) {
					b.Field(j).AppendNull()
				} else if c.numeric {
					b.Field(j).(*array.Float64Builder).Append(col.Num[i])
				} else {
					b.Field(j).(*array.StringBuilder).Append(col.Levels[col.Codes[i]])
				}
			}
		}
		rec := b.NewRecord()
		if err := w.Write(rec); err != nil {
			t.Fatal(err)
		}
		rec.Release()
		b.Release()
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

func quietAudit(model, cohortFile, out string) *auditOptions {
	return &auditOptions{model: model, cohortFile: cohortFile, out: out, thresholds: "0.05:0.50:0.05",
		classifyAt: []float64{0.1, 0.2}, groups: 10, hlGroups: 10, span: 0.75, delta: validate.AutoDelta,
		epsilon: validate.DefaultEpsilon, data: dataFlags{missing: "complete-case"}, quiet: true, size: defaultSize()}
}

// TestParquetAuditMatchesCSV audits the demo's later extract as CSV and as
// Parquet: every measure agrees.
func TestParquetAuditMatchesCSV(t *testing.T) {
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	if err := runDemo(filepath.Join(dir, "d"), s); err != nil {
		t.Fatal(err)
	}
	csv := filepath.Join(dir, "d", "later.csv")
	pq := filepath.Join(dir, "later.parquet")
	toParquet(t, csv, pq, 1000)
	frozen := filepath.Join(dir, "d", "frozen.yaml")
	var got [2]map[string]any
	for k, in := range []string{csv, pq} {
		out := filepath.Join(dir, []string{"a", "b"}[k])
		if err := runAudit(quietAudit(frozen, in, out), s); err != nil {
			if _, ok := err.(*criterionError); !ok {
				t.Fatal(err)
			}
		}
		b, err := os.ReadFile(filepath.Join(out, "audit.json"))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, &got[k]); err != nil {
			t.Fatal(err)
		}
	}
	for _, key := range []string{"discrimination", "calibration", "overall", "cohort"} {
		a, b := got[0][key].(map[string]any), got[1][key].(map[string]any)
		for name, va := range a {
			fa, ok := va.(float64)
			if !ok {
				continue
			}
			if fb := b[name].(float64); math.Abs(fa-fb) > 1e-12*math.Max(1, math.Abs(fa)) {
				t.Errorf("%s.%s: CSV %v, Parquet %v", key, name, fa, fb)
			}
		}
	}
}

// BenchmarkAuditParquet10M audits a 10M-row Parquet cohort with the
// demo's frozen model (the file is written once, outside the timing).
func BenchmarkAuditParquet10M(b *testing.B) {
	dir := b.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	if err := runDemo(filepath.Join(dir, "d"), s); err != nil {
		b.Fatal(err)
	}
	big := scenario.Later
	big.Rows = 10_000_000
	csv := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(csv, big.CSV(), 0o644); err != nil {
		b.Fatal(err)
	}
	pq := filepath.Join(dir, "big.parquet")
	toParquet(b, csv, pq, 1<<20)
	os.Remove(csv)
	o := quietAudit(filepath.Join(dir, "d", "frozen.yaml"), pq, filepath.Join(dir, "audit"))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := runAudit(o, s); err != nil {
			if _, ok := err.(*criterionError); !ok {
				b.Fatal(err)
			}
		}
	}
}

// TestScoreParquetMatchesCSV scores the demo extract as CSV and as
// Parquet: the Parquet output holds the same linear predictors and risks,
// null where the CSV output has empty fields.
func TestScoreParquetMatchesCSV(t *testing.T) {
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	demo := filepath.Join(dir, "d")
	if err := runDemo(demo, s); err != nil {
		t.Fatal(err)
	}
	csv, pq := filepath.Join(demo, "later.csv"), filepath.Join(dir, "later.parquet")
	toParquet(t, csv, pq, 1000)
	for _, args := range [][]string{
		{"score", "--model", filepath.Join(demo, "frozen.yaml"), "--data", csv, "--out", filepath.Join(dir, "scored.csv"), "-q"},
		{"score", "--model", filepath.Join(demo, "frozen.yaml"), "--data", pq, "--out", filepath.Join(dir, "scored.parquet"), "-q"},
	} {
		if code := run(args, s); code != 0 {
			t.Fatalf("%v: exit status %d", args, code)
		}
	}
	reqs := []cohort.Request{{Name: lpColumn, Kind: cohort.Numeric}, {Name: riskColumn, Kind: cohort.Numeric}, {Name: "age", Kind: cohort.Numeric}}
	a, err := cohort.Load(filepath.Join(dir, "scored.csv"), reqs, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := cohort.Load(filepath.Join(dir, "scored.parquet"), reqs, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a.Rows != b.Rows || a.Column(lpColumn).Missing == 0 || a.Column(lpColumn).Missing != b.Column(lpColumn).Missing {
		t.Fatalf("rows %d/%d, unscored %d/%d", a.Rows, b.Rows, a.Column(lpColumn).Missing, b.Column(lpColumn).Missing)
	}
	for _, name := range []string{lpColumn, riskColumn, "age"} {
		for i := 0; i < a.Rows; i++ {
			x, y := a.Column(name).Num[i], b.Column(name).Num[i]
			// The CSV holds the shortest text that reads back exactly.
			if !(x == y || math.IsNaN(x) && math.IsNaN(y)) {
				t.Fatalf("%s row %d: CSV %v, Parquet %v", name, i, x, y)
			}
		}
	}
}
