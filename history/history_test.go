package history

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"sync"
	"syscall"
	"testing"
)

func rec(i int) Record {
	return Record{AuditDate: fmt.Sprintf("2026-%02d-01", 1+i%12), Model: "m", ModelSHA: "a", Cohort: "c", CohortSHA: fmt.Sprint("b", i),
		Rows: 100 + i, Used: 90, Events: 10, Expected: 9.5, AUC: [3]float64{0.7, 0.65, 0.75}, OE: [3]float64{1.05, 0.6, 1.8},
		Slope: [3]float64{1, 0.8, 1.2}, CITL: [3]float64{0.05, -0.4, 0.5}, ICI: 0.01, Brier: 0.08, Verdict: "pass", JSON: "{}"}
}

// TestConcurrentAppends: two writers appending at once lose nothing.
func TestConcurrentAppends(t *testing.T) {
	path := filepath.Join(t.TempDir(), "h.sqlite")
	var wg sync.WaitGroup
	errs := make(chan error, 100)
	for w := 0; w < 2; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for i := 0; i < 25; i++ {
				if err := Append(path, rec(w*100+i)); err != nil {
					errs <- err
				}
			}
		}(w)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 50 {
		t.Fatalf("%d records, want 50", len(got))
	}
	if err := Check(path); err != nil {
		t.Fatal(err)
	}
}

// TestKilledWriterLeavesEarlierRecords kills a writer process in the
// middle of its transaction, after the insert and before the commit.
func TestKilledWriterLeavesEarlierRecords(t *testing.T) {
	if os.Getenv("HISTORY_CRASH_FILE") != "" {
		db, err := open(os.Getenv("HISTORY_CRASH_FILE"))
		if err != nil {
			os.Exit(2)
		}
		_ = appendTx(db, rec(99), func() {
			_ = syscall.Kill(os.Getpid(), syscall.SIGKILL)
			select {}
		})
		os.Exit(3)
	}
	path := filepath.Join(t.TempDir(), "h.sqlite")
	for i := 0; i < 3; i++ {
		if err := Append(path, rec(i)); err != nil {
			t.Fatal(err)
		}
	}
	cmd := exec.Command(os.Args[0], "-test.run=TestKilledWriterLeavesEarlierRecords")
	cmd.Env = append(os.Environ(), "HISTORY_CRASH_FILE="+path)
	err := cmd.Run()
	if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != -1 {
		t.Fatalf("the writer should have been killed: %v", err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 3 {
		t.Fatalf("%d records after the killed write, want the 3 committed", len(got))
	}
	if err := Check(path); err != nil {
		t.Fatal(err)
	}
	if err := Append(path, rec(4)); err != nil {
		t.Fatalf("appending after the crash: %v", err)
	}
}

// TestErrorKinds: an empty store and a damaged one give errors that
// errors.Is finds with their sentinel (and not the other's), with the
// messages the CLI prints.
func TestErrorKinds(t *testing.T) {
	dir := t.TempDir()
	// A store whose table exists but holds no audit.
	empty := filepath.Join(dir, "empty.sqlite")
	if err := Append(empty, rec(0)); err != nil {
		t.Fatal(err)
	}
	execAll(t, empty, "DELETE FROM audits")
	// A store with an index whose declared order no longer matches its
	// entries.
	damaged := filepath.Join(dir, "damaged.sqlite")
	if err := Append(damaged, rec(0)); err != nil { // a store, with its table
		t.Fatal(err)
	}
	execAll(t, damaged, "CREATE TABLE t(a INTEGER)", "CREATE INDEX ti ON t(a)", "INSERT INTO t VALUES (1), (2), (3)",
		"PRAGMA writable_schema=ON", "UPDATE sqlite_master SET sql = 'CREATE INDEX ti ON t(a DESC)' WHERE name = 'ti'")
	for _, tc := range []struct {
		name       string
		err        error
		kind, not  error
		wantPrefix string
	}{
		{"no audits", func() error { _, err := Read(empty); return err }(), ErrNoAudits, ErrIntegrity,
			"history " + empty + ": no audits recorded"},
		{"integrity", Check(damaged), ErrIntegrity, ErrNoAudits,
			"history " + damaged + ": integrity check: "},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if tc.err == nil {
				t.Fatal("no error")
			}
			if !errors.Is(tc.err, tc.kind) || errors.Is(tc.err, tc.not) {
				t.Errorf("errors.Is(%v): %v %v, %v %v", tc.err, tc.kind, errors.Is(tc.err, tc.kind), tc.not, errors.Is(tc.err, tc.not))
			}
			if !strings.HasPrefix(tc.err.Error(), tc.wantPrefix) {
				t.Errorf("message %q, want it to start %q", tc.err, tc.wantPrefix)
			}
		})
	}
}

// execAll runs the statements on the store at path.
func execAll(t *testing.T, path string, stmts ...string) {
	t.Helper()
	db, err := open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, q := range stmts {
		if _, err := db.Exec(q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
}

// TestPending: a record begun and rolled back leaves nothing; one
// committed is there with its token; HasToken tells them apart.
func TestPending(t *testing.T) {
	path := filepath.Join(t.TempDir(), "h.sqlite")
	if err := Append(path, rec(0)); err != nil {
		t.Fatal(err)
	}
	r := rec(1)
	r.Token = "abandoned"
	p, err := Begin(path, r, false)
	if err != nil {
		t.Fatal(err)
	}
	p.Rollback()
	r.Token = "kept"
	if p, err = Begin(path, r, false); err != nil {
		t.Fatal(err)
	}
	if err := p.Commit(); err != nil {
		t.Fatal(err)
	}
	recs, err := Read(path)
	if err != nil || len(recs) != 2 {
		t.Fatalf("%d records, %v", len(recs), err)
	}
	for token, want := range map[string]bool{"kept": true, "abandoned": false} {
		if got, err := HasToken(path, token); err != nil || got != want {
			t.Errorf("HasToken(%q) = %v, %v", token, got, err)
		}
	}
}

// TestMigratesStoreWithoutToken: a store made before the token column
// gains it on the next append, and its records stay readable.
func TestMigratesStoreWithoutToken(t *testing.T) {
	path := filepath.Join(t.TempDir(), "old.sqlite")
	db, err := open(path)
	if err != nil {
		t.Fatal(err)
	}
	// The table as stores made before the token column hold it (schema
	// creates it so; migrate adds the column).
	if _, err := db.Exec(schema); err != nil {
		t.Fatal(err)
	}
	r := rec(2)
	if _, err := db.Exec(`INSERT INTO audits (audit_date, recorded_at, model, model_sha256, cohort, cohort_sha256,
		rows_read, rows_used, events, expected, verdict, audit_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
		r.AuditDate, "2026-01-01T00:00:00Z", r.Model, r.ModelSHA, r.Cohort, r.CohortSHA, r.Rows, r.Used, r.Events, r.Expected, r.Verdict, r.JSON); err != nil {
		t.Fatal(err)
	}
	db.Close()
	r = rec(3)
	r.Token = "new"
	if err := Append(path, r); err != nil {
		t.Fatal(err)
	}
	if recs, err := Read(path); err != nil || len(recs) != 2 {
		t.Fatalf("%d records, %v", len(recs), err)
	}
	if ok, err := HasToken(path, "new"); !ok || err != nil {
		t.Errorf("HasToken after migration: %v, %v", ok, err)
	}
}

// TestNotAStore: an empty file, a text file, a folder and an SQLite
// database of other tables are refused as not a store (ErrNotStore) by
// every entry point, and left byte for byte as they were.
func TestNotAStore(t *testing.T) {
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty.sqlite")
	text := filepath.Join(dir, "notes.txt")
	other := filepath.Join(dir, "other.sqlite")
	os.WriteFile(empty, nil, 0o644)
	os.WriteFile(text, []byte("my notes\n"), 0o644)
	db, err := connect(other, false)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE TABLE patients(id INTEGER)"); err != nil {
		t.Fatal(err)
	}
	db.Close()
	before := map[string][]byte{}
	for _, p := range []string{empty, text, other} {
		before[p], _ = os.ReadFile(p)
	}
	for _, p := range []string{empty, text, other, dir} {
		for name, err := range map[string]error{
			"CheckStore": CheckStore(p),
			"Append":     Append(p, rec(0)),
			"Read":       func() error { _, err := Read(p); return err }(),
			"Remove":     func() error { _, _, err := Remove(p, 1); return err }(),
		} {
			if !errors.Is(err, ErrNotStore) {
				t.Errorf("%s(%s): %v, want ErrNotStore", name, filepath.Base(p), err)
			}
		}
	}
	for p, b := range before {
		if now, _ := os.ReadFile(p); !bytes.Equal(now, b) {
			t.Errorf("%s was changed", filepath.Base(p))
		}
	}
	// A path with characters an SQLite URI gives a meaning names its own
	// file.
	odd := filepath.Join(dir, "h?mode=ro#x%20.sqlite")
	if err := Append(odd, rec(1)); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(odd); err != nil {
		t.Errorf("the store was not made at %s: %v", odd, err)
	}
}

// TestCriteriaAndParentKept: a record's parent model and criteria come
// back as written; a record judged by no criterion keeps an empty list,
// and one without criteria (nil) reads back as nil; the pending
// record's ID is the one the store gives it.
func TestCriteriaAndParentKept(t *testing.T) {
	path := filepath.Join(t.TempDir(), "h.sqlite")
	f := func(v float64) *float64 { return &v }
	want := []Criterion{
		{Measure: "auc_ci.lower", AtLeast: f(0.7), Severity: "fail"},
		{Measure: "ici", AtMost: f(0.03), Severity: "review"},
		{Measure: "slope", Between: &[2]float64{0.8, 1.2}, Severity: "fail"},
		{Measure: "oe_ci", Contains: f(1), Severity: "fail"},
	}
	r := rec(1)
	r.ParentSHA, r.Criteria = "parent-sha", want
	p, err := Begin(path, r, false)
	if err != nil {
		t.Fatal(err)
	}
	if err := p.Commit(); err != nil {
		t.Fatal(err)
	}
	none := rec(2)
	none.Criteria = []Criterion{}
	if err := Append(path, none); err != nil {
		t.Fatal(err)
	}
	if err := Append(path, rec(3)); err != nil {
		t.Fatal(err)
	}
	recs, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if p.ID != recs[0].ID || recs[0].ParentSHA != "parent-sha" || !reflect.DeepEqual(recs[0].Criteria, want) {
		t.Errorf("record %d (pending ID %d): parent %q, criteria %v", recs[0].ID, p.ID, recs[0].ParentSHA, recs[0].Criteria)
	}
	for i, c := range recs[0].Criteria {
		if c.Bound() != []string{"≥ 0.7", "≤ 0.03", "between 0.8 and 1.2", "interval contains 1"}[i] {
			t.Errorf("criterion %d reads %q", i, c.Bound())
		}
	}
	if recs[1].Criteria == nil || len(recs[1].Criteria) != 0 || recs[2].Criteria != nil {
		t.Errorf("no criteria read as %#v, unknown criteria as %#v", recs[1].Criteria, recs[2].Criteria)
	}
}

// TestOldStoreReadsWithoutChange: a store made before the parent and
// criteria columns is read without being written to; its records have
// no parent, and their criteria are read from the verdict in their
// audit.json, exactly as it wrote the bounds (a bound it could not have
// written is left out).
func TestOldStoreReadsWithoutChange(t *testing.T) {
	path := filepath.Join(t.TempDir(), "old.sqlite")
	db, err := connect(path, false)
	if err != nil {
		t.Fatal(err)
	}
	// The first version's table, as the oldest stores hold it.
	if _, err := db.Exec(schema); err != nil {
		t.Fatal(err)
	}
	verdict := `{"schema": "riskaudit.audit/1", "verdict": {"status": "fail", "criteria": [
		{"measure": "auc_ci.lower", "bound": "≥ 0.7", "value": 0.71, "passed": true, "severity": "fail"},
		{"measure": "slope", "bound": "between 0.8 and 1.2", "value": 1.3, "passed": false, "severity": "fail"},
		{"measure": "oe_ci", "bound": "interval contains 1", "value": 1.1, "passed": true, "severity": "fail"},
		{"measure": "ici", "bound": "≤ 0.03", "value": 0.01, "passed": true, "severity": "review"},
		{"measure": "brier", "bound": "≤ 0.250", "value": 0.1, "passed": true, "severity": "fail"},
		{"measure": "auc", "bound": "at least 0.7", "value": 0.7, "passed": true, "severity": "fail"}]}}`
	for i, js := range []string{verdict, "not json", "{}"} {
		r := rec(i)
		if _, err := db.Exec(`INSERT INTO audits (audit_date, recorded_at, model, model_sha256, cohort, cohort_sha256,
			rows_read, rows_used, events, expected, verdict, audit_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
			r.AuditDate, "2026-01-01T00:00:00Z", r.Model, r.ModelSHA, r.Cohort, r.CohortSHA, r.Rows, r.Used, r.Events, r.Expected, r.Verdict, js); err != nil {
			t.Fatal(err)
		}
	}
	db.Close()
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	recs, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if after, _ := os.ReadFile(path); !bytes.Equal(before, after) {
		t.Error("reading the old store changed it")
	}
	var got []string
	for _, c := range recs[0].Criteria {
		got = append(got, c.Measure+" "+c.Bound()+" "+c.Severity)
	}
	want := "[auc_ci.lower ≥ 0.7 fail slope between 0.8 and 1.2 fail oe_ci interval contains 1 fail ici ≤ 0.03 review]"
	if fmt.Sprint(got) != want || recs[0].ParentSHA != "" {
		t.Errorf("criteria from audit.json: %v, want %s; parent %q", got, want, recs[0].ParentSHA)
	}
	if recs[1].Criteria != nil || recs[2].Criteria != nil {
		t.Errorf("criteria of records whose audit.json has none: %v, %v", recs[1].Criteria, recs[2].Criteria)
	}
	// The next append migrates the store and keeps what it holds.
	r := rec(5)
	r.ParentSHA = "p"
	if err := Append(path, r); err != nil {
		t.Fatal(err)
	}
	if recs, err = Read(path); err != nil || len(recs) != 4 || len(recs[0].Criteria) != 4 {
		t.Fatalf("after migration: %d records, %v", len(recs), err)
	}
}

// TestRemoveSaysWhatIsLeft: Remove returns the record removed and the
// number left.
func TestRemoveSaysWhatIsLeft(t *testing.T) {
	path := filepath.Join(t.TempDir(), "h.sqlite")
	for i := 0; i < 3; i++ {
		if err := Append(path, rec(i)); err != nil {
			t.Fatal(err)
		}
	}
	r, left, err := Remove(path, 2)
	if err != nil || r.ID != 2 || left != 2 || r.ModelSHA != "a" || r.CohortSHA != "b1" {
		t.Errorf("Remove: %+v, %d left, %v", r, left, err)
	}
}
