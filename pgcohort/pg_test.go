package pgcohort_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/pgcohort"
	"github.com/riskaudit/riskaudit/validate"
)

// pgURL is the test server's connection, which .ci/run sets after
// starting a throw-away cluster with the demo cohorts loaded
// (.ci/postgres.sh, testdata/postgres/load.sql). Without it the test is
// skipped, except under CI, where a missing server is a failure.
func pgURL(t testing.TB) string {
	t.Helper()
	u := os.Getenv("RISKAUDIT_TEST_PGURL")
	if u == "" {
		if os.Getenv("CI") != "" {
			t.Fatal("RISKAUDIT_TEST_PGURL is not set under CI: .ci/run starts a PostgreSQL server for these tests")
		}
		t.Skip("RISKAUDIT_TEST_PGURL is not set: no PostgreSQL server to test against (.ci/run starts one)")
	}
	return u
}

func newQuery(t testing.TB, sql string, params ...pgcohort.Param) *pgcohort.Query {
	t.Helper()
	q, err := pgcohort.New(pgURL(t), sql, "", params)
	if err != nil {
		t.Fatal(err)
	}
	return q
}

const laterSQL = `SELECT patient_ref, age, sex, bmi, smoker, albumin, op_minutes, lung_disease, ppc_30d
FROM ovh_later ORDER BY patient_ref`
const devSQL = `SELECT patient_ref, age, sex, bmi, smoker, albumin, op_minutes, lung_disease, ppc_30d
FROM ovh_development ORDER BY patient_ref`

// auditJSON is the audit.json of a result without its provenance and
// the model's file, which name the inputs.
func auditJSON(t *testing.T, res *audit.Result) map[string]any {
	t.Helper()
	b, err := jsonout.Marshal(res.Audit)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "provenance")
	delete(m["model"].(map[string]any), "spec")
	if dev, ok := m["development"].(map[string]any); ok {
		delete(dev, "file")
	}
	if up, ok := m["update"].(map[string]any); ok {
		// The file and hash of the model updated: the two models were
		// fitted to the same rows, but their files record different
		// sources (a query's rows, a CSV file).
		delete(up, "model_file")
		delete(up, "parent_model")
	}
	return m
}

// The audit of a query equals the audit of the CSV files of the same
// rows, number for number: the demo extracts, loaded into typed tables
// (integer, real, numeric(4,1), char(1), an enumerated type) by
// testdata/postgres/load.sql. The model is fitted on the development
// query and on the development CSV, and each audit measures its own
// fitted model beside its development data (case-mix included).
func TestAuditOfQueryEqualsAuditOfCSV(t *testing.T) {
	pgURL(t)
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	fitOf := func(data audit.Input) string {
		r, err := audit.Fit(ctx, audit.FitConfig{Model: d.Recipe, Data: data, Tool: "riskaudit test"})
		if err != nil {
			t.Fatal(err)
		}
		y, err := r.Frozen.MarshalYAML()
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(t.TempDir(), "frozen.yaml")
		if err := os.WriteFile(path, y, 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	dev := newQuery(t, devSQL)
	later := newQuery(t, laterSQL)
	fromQuery := fitOf(audit.Input{Source: dev})
	fromCSV := fitOf(audit.Input{Path: d.Development})
	run := func(model string, cohortIn, devIn audit.Input) *audit.Result {
		res, err := audit.Run(ctx, audit.Config{Model: model, Cohort: cohortIn, Dev: devIn, Update: filepath.Join(t.TempDir(), "u.yaml")})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	rq := run(fromQuery, audit.Input{Source: later}, audit.Input{Source: dev})
	rc := run(fromCSV, audit.Input{Path: d.Later}, audit.Input{Path: d.Development})
	if path := firstDifference("", auditJSON(t, rq), auditJSON(t, rc)); path != "" {
		t.Fatalf("the audit of the queries differs from the audit of the CSV files at %s", path)
	}
	if !rq.Audit.Development.Fitted {
		t.Error("the model fitted on the development query is not recognised (by the rows' SHA-256) as fitted to it")
	}
	in := rq.Audit.Provenance.Inputs
	if len(in) != 3 || in[1].Role != "cohort" || in[1].Query == nil || in[2].Query == nil {
		t.Fatalf("provenance inputs %+v", in)
	}
	q := in[1].Query
	if q.System != "postgresql" || q.Rows != 3000 || !q.ReadOnly || q.SQL != laterSQL || q.Database == "" || q.User == "" ||
		q.Server == "" || q.ServerVersion == "" || q.RowsSHA256 != in[1].SHA256 || len(q.Columns) != 9 || q.Columns[5].Type != "numeric(4,1)" {
		t.Errorf("the cohort's query provenance: %+v", q)
	}
}

// rowsSHA256 is the SHA-256 of the rows of sql as psql fetches them in
// PostgreSQL's binary COPY format, hashed by Python's hashlib
// (testdata/postgres/rows_sha256.py): an outside computation.
func rowsSHA256(t *testing.T, sql string) string {
	t.Helper()
	out, err := exec.Command("/usr/bin/python3", "../testdata/postgres/rows_sha256.py", pgURL(t), sql).Output()
	if err != nil {
		t.Fatalf("rows_sha256.py: %v", err)
	}
	return strings.TrimSpace(string(out))
}

// The rows' SHA-256 is reproducible from the documented serialisation:
// psql's binary COPY of the same query, with the parameters written in,
// hashed by Python gives the same digest, for typed columns, NULLs, text
// and a result with columns the audit does not read.
func TestRowsSHA256IsThatOfBinaryCOPY(t *testing.T) {
	for _, c := range []struct {
		name, sql, literal string
		params             []pgcohort.Param
		reqs               []cohort.Request
	}{
		{"demo cohort of one month", `SELECT * FROM ovh_later WHERE surgery_date >= @start AND surgery_date < @end ORDER BY patient_ref`,
			`SELECT * FROM ovh_later WHERE surgery_date >= '2025-03-01' AND surgery_date < '2025-04-01' ORDER BY patient_ref`,
			[]pgcohort.Param{{Name: "start", Value: "2025-03-01"}, {Name: "end", Value: "2025-04-01"}},
			[]cohort.Request{{Name: "age", Kind: cohort.Numeric}, {Name: "ppc_30d", Kind: cohort.Categorical}}},
		{"many types and NULLs", typesSQL, typesSQL, nil, []cohort.Request{{Name: "i4", Kind: cohort.Numeric}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			q := newQuery(t, c.sql, c.params...)
			fr, err := q.Load(context.Background(), c.reqs, cohort.Options{})
			if err != nil {
				t.Fatal(err)
			}
			if want := rowsSHA256(t, c.literal); fr.Query.RowsSHA256 != want {
				t.Errorf("rows SHA-256 %s, psql's binary COPY hashed by Python %s", fr.Query.RowsSHA256, want)
			}
		})
	}
}

// typesSQL has a column of each type pgcohort reads, with NULLs and
// special values.
const typesSQL = `SELECT * FROM (VALUES
 (1, true, 1::int2, -7::int4, 9007199254740993::int8, 0.1::real, 0.1::float8, 1.50::numeric(6,2), '2.5e3'::text, ' NA '::text, 'b  '::char(3), 'former'::smoking, DATE '2026-02-28', TIMESTAMP '2026-02-28 13:45:01.5', TIMESTAMPTZ '2026-02-28 13:45:01+02', '6ba7b810-9dad-11d1-80b4-00c04fd430c8'::uuid, 1234567.125::float8, 1e-7::float8, 123456789012345678901234567890.000000001::numeric),
 (2, false, NULL, NULL, -1, 3.4028235e38::real, 1e300::float8, -0.0001::numeric, NULL, 'x', NULL, NULL, DATE '1999-12-31', NULL, NULL, NULL, 1e15::float8, -2.5e-5::float8, 0::numeric),
 (3, NULL, '-32768'::int2, 2147483647, NULL, NULL, 'NaN'::float8, 'NaN'::numeric, '-17', '', 'a', 'never', NULL, TIMESTAMP '1970-01-01 00:00:00', NULL, NULL, 100000000000000::float8, 123456::float8, 99999999.99999999::numeric)
) AS t(n, b, i2, i4, i8, f4, f8, num, txt, marker, bpc, en, d, ts, tstz, u, big, small, wide)
ORDER BY n`

// psqlRows runs sql with psql and returns its text output, row by row
// and field by field (NULL as \N): PostgreSQL's own output functions,
// the reference for the values read. TimeZone is UTC.
func psqlRows(t *testing.T, sql string) [][]string {
	t.Helper()
	cmd := exec.Command("psql", "-X", "-q", "-A", "-t", "-F", "\x1f", "-P", "null=\\N", "-d", pgURL(t), "-c", sql)
	cmd.Env = append(os.Environ(), "PGTZ=UTC", "PGDATESTYLE=ISO")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("psql: %v", err)
	}
	var rows [][]string
	for _, line := range strings.Split(strings.TrimRight(string(out), "\n"), "\n") {
		rows = append(rows, strings.Split(line, "\x1f"))
	}
	return rows
}

// Values read in the binary protocol equal PostgreSQL's own text output
// (psql): numbers read as Go reads psql's text (strconv.ParseFloat, so
// real values are the decimals PostgreSQL prints), categories as psql
// prints them, with the documented exceptions: boolean categories read
// true/false (psql prints t/f), char(n) drops trailing blanks, NULL and
// the missing markers are missing, NaN is missing.
func TestValuesEqualPostgreSQLTextOutput(t *testing.T) {
	ref := psqlRows(t, typesSQL)
	numeric := []string{"b", "i2", "i4", "i8", "f4", "f8", "num", "txt", "big", "small", "wide"}
	categorical := []string{"b", "i2", "i4", "i8", "f4", "f8", "num", "txt", "marker", "bpc", "en", "d", "ts", "tstz", "u", "big", "small", "wide"}
	cols := []string{"n", "b", "i2", "i4", "i8", "f4", "f8", "num", "txt", "marker", "bpc", "en", "d", "ts", "tstz", "u", "big", "small", "wide"}
	index := map[string]int{}
	for i, c := range cols {
		index[c] = i
	}
	q := newQuery(t, typesSQL)
	for _, kind := range []cohort.Kind{cohort.Numeric, cohort.Categorical} {
		names := numeric
		if kind == cohort.Categorical {
			names = categorical
		}
		var reqs []cohort.Request
		for _, n := range names {
			reqs = append(reqs, cohort.Request{Name: n, Kind: kind})
		}
		fr, err := q.Load(context.Background(), reqs, cohort.Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, n := range names {
			col := fr.Column(n)
			for r, row := range ref {
				text := row[index[n]]
				if kind == cohort.Numeric {
					got := col.Num[r]
					var want float64
					switch text {
					case `\N`, "NaN":
						want = math.NaN()
					case "t":
						want = 1
					case "f":
						want = 0
					default:
						var err error
						if want, err = strconv.ParseFloat(text, 64); err != nil {
							t.Fatalf("%s row %d: psql printed %q", n, r+1, text)
						}
					}
					if !(got == want || math.IsNaN(got) && math.IsNaN(want)) {
						t.Errorf("numeric %s, row %d: read %v, psql prints %q", n, r+1, got, text)
					}
					continue
				}
				want := text
				switch {
				case n == "b" && text == "t":
					want = "true"
				case n == "b" && text == "f":
					want = "false"
				case n == "bpc":
					want = strings.TrimRight(text, " ")
				}
				if isDefaultMissing(want) || text == `\N` {
					want = ""
				}
				got := ""
				if c := col.Codes[r]; c >= 0 {
					got = col.Levels[c]
				}
				if got != want {
					t.Errorf("categorical %s, row %d: read %q, psql prints %q", n, r+1, got, text)
				}
			}
		}
	}
}

// isDefaultMissing reports whether s, spaces trimmed, is one of the
// default missing-value markers.
func isDefaultMissing(s string) bool {
	return slices.Contains(cohort.DefaultMissing, strings.TrimSpace(s))
}

// firstDifference is the path of the first value that differs between
// two decoded JSON documents, or "".
func firstDifference(path string, a, b any) string {
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			return path + " (keys)"
		}
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		for _, k := range keys {
			if d := firstDifference(path+"."+k, x[k], y[k]); d != "" {
				return d
			}
		}
		return ""
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			return path + " (length)"
		}
		for i := range x {
			if d := firstDifference(path+"["+strconv.Itoa(i)+"]", x[i], y[i]); d != "" {
				return d
			}
		}
		return ""
	}
	if !reflect.DeepEqual(a, b) {
		return path + ": " + strconv.Quote(fmt.Sprint(a)) + " against " + strconv.Quote(fmt.Sprint(b))
	}
	return ""
}

// A comparison on a query equals the comparison on the CSV file of the
// same rows (the paired DeLong test, the Brier difference with its
// bootstrap interval, the decision curves and both models'
// calibration), and its provenance describes the query.
func TestCompareOfQueryEqualsCompareOfCSV(t *testing.T) {
	pgURL(t)
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	// Model b: the recipe refitted on the later extract itself.
	r, err := audit.Fit(ctx, audit.FitConfig{Model: d.Recipe, Data: audit.Input{Path: d.Later}, Tool: "riskaudit test"})
	if err != nil {
		t.Fatal(err)
	}
	y, err := r.Frozen.MarshalYAML()
	if err != nil {
		t.Fatal(err)
	}
	refit := filepath.Join(t.TempDir(), "refit.yaml")
	if err := os.WriteFile(refit, y, 0o644); err != nil {
		t.Fatal(err)
	}
	run := func(in audit.Input) *audit.CompareResult {
		res, err := audit.Compare(ctx, audit.CompareConfig{Models: []string{d.Frozen, refit}, Cohort: in,
			Measures: validate.CompareOptions{Replicates: 200, Seed: 5}})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	rq, rc := run(audit.Input{Source: newQuery(t, laterSQL)}), run(audit.Input{Path: d.Later})
	comparable := func(res *audit.CompareResult) map[string]any {
		b, err := jsonout.Marshal(res.Comparison)
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"provenance", "cohort", "cohort_sha256", "command_line"} {
			delete(m, k)
		}
		return m
	}
	if path := firstDifference("", comparable(rq), comparable(rc)); path != "" {
		t.Fatalf("the comparison on the query differs from that on the CSV file at %s", path)
	}
	var q *cohort.QueryInfo
	for _, in := range rq.Comparison.Provenance.Inputs {
		if in.Role == "cohort" {
			q = in.Query
		}
	}
	if q == nil || q.SQL != laterSQL || q.Rows != 3000 || q.RowsSHA256 != rq.Comparison.CohortSHA {
		t.Errorf("the comparison's provenance does not describe the query: %+v", q)
	}
}

// The sample size planned from a model's linear predictor on a query's
// rows equals that planned from the CSV file of the same rows.
func TestSampleSizeOfQueryEqualsSampleSizeOfCSV(t *testing.T) {
	pgURL(t)
	d := fixture.WriteDemo(t, t.TempDir())
	plan := func(in audit.Input) *audit.SizePlan {
		p, err := audit.PlanSize(context.Background(), audit.SizeConfig{Model: d.Frozen, Data: in, CalSlope: 1})
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	pq, pc := plan(audit.Input{Source: newQuery(t, laterSQL)}), plan(audit.Input{Path: d.Later})
	if !reflect.DeepEqual(pq.Result, pc.Result) {
		t.Errorf("sample size from the query %+v, from the CSV file %+v", pq.Result, pc.Result)
	}
}
