package audit

import (
	"database/sql"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/validate"
)

// testResult is a small audit of invented risks, with the given figure
// names (their content is a placeholder) and further files.
func testResult(t *testing.T, figures []string, extras ...atomicfile.File) *Result {
	t.Helper()
	y := []float64{0, 1, 0, 0, 1, 1, 0, 1, 0, 0, 1, 0}
	p := []float64{0.1, 0.7, 0.2, 0.3, 0.6, 0.8, 0.4, 0.5, 0.2, 0.1, 0.9, 0.3}
	perf, err := validate.Assess(y, p, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	a := validate.NewAudit(validate.ModelInfo{Name: "test model"}, validate.Provenance{Tool: "test",
		Inputs: []validate.InputFile{{Role: "cohort", Path: filepath.Join(t.TempDir(), "cohort.csv")}}}, perf, nil, "")
	a.Verdict = &validate.Verdict{Status: "pass"}
	r := &Result{Audit: a, Files: extras, Started: time.Date(2026, 11, 30, 8, 0, 0, 0, time.UTC)}
	for _, f := range figures {
		r.Figures = append(r.Figures, plots.Figure{Name: f, Title: f, SVG: []byte("<svg/>")})
	}
	return r
}

func names(t *testing.T, dir string) []string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var n []string
	for _, e := range entries {
		n = append(n, e.Name())
	}
	return n
}

// TestWriteReplacesWhole: an audit written into the folder of an earlier
// one replaces it whole (no figure of the earlier one survives) and says
// so; nothing is left beside the folder.
func TestWriteReplacesWhole(t *testing.T) {
	top := t.TempDir()
	dir := filepath.Join(top, "audit")
	w, err := Write(dir, testResult(t, []string{"roc.svg", "subgroups.svg"}), WriteOptions{})
	if err != nil || w.Replaced {
		t.Fatalf("first write: %v, replaced %v", err, w != nil && w.Replaced)
	}
	w, err = Write(dir, testResult(t, []string{"roc.svg"}), WriteOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !w.Replaced || w.ReplacedAt != "2026-11-30T08:00:00Z" {
		t.Errorf("the second write did not say it replaced the first: %+v", w)
	}
	if got := names(t, dir); !reflect.DeepEqual(got, []string{".riskaudit.json", "audit.json", "report.html", "report.md", "roc.svg"}) {
		t.Errorf("the folder holds %v", got)
	}
	// audit.json lists the folder's files, the manifest aside.
	var doc struct {
		Outputs []string `json:"outputs"`
	}
	b, err := os.ReadFile(filepath.Join(dir, "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	slices.Sort(doc.Outputs)
	if want := []string{"audit.json", "report.html", "report.md", "roc.svg"}; !reflect.DeepEqual(doc.Outputs, want) {
		t.Errorf("audit.json lists the outputs %v, want %v", doc.Outputs, want)
	}
	if got := names(t, top); !reflect.DeepEqual(got, []string{"audit"}) {
		t.Errorf("beside the folder: %v", got)
	}
}

// TestWriteRefusesForeignFiles: a folder holding files riskaudit did not
// write is not replaced, and the refusal names them (ten at most).
func TestWriteRefusesForeignFiles(t *testing.T) {
	dir := t.TempDir()
	var want []string
	for i := 0; i < 12; i++ {
		n := "notes-" + string(rune('a'+i)) + ".txt"
		want = append(want, n)
		if err := os.WriteFile(filepath.Join(dir, n), []byte("mine"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	_, err := Write(dir, testResult(t, nil), WriteOptions{})
	if err == nil || !strings.Contains(err.Error(), "holds files riskaudit did not write (notes-a.txt") || !strings.Contains(err.Error(), "… and 2 more") {
		t.Fatalf("error %v", err)
	}
	if got := names(t, dir); !reflect.DeepEqual(got, want) {
		t.Errorf("the folder now holds %v", got)
	}
	// A folder of an earlier audit without a manifest (written before
	// manifests) is recognised by its files.
	old := filepath.Join(t.TempDir(), "old")
	if err := os.Mkdir(old, 0o755); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(old, "audit.json"), []byte("{\n  \"schema\": \"riskaudit.audit/1\"\n}\n"), 0o644)
	os.WriteFile(filepath.Join(old, "subgroups.svg"), []byte("<svg/>"), 0o644)
	if w, err := Write(old, testResult(t, nil), WriteOptions{}); err != nil || !w.Replaced {
		t.Errorf("an earlier audit's folder was refused: %v", err)
	}
}

// TestWriteRefusesClashes: an output that is an input, two outputs at one
// path, an input inside the folder, an extra in a folder below it.
func TestWriteRefusesClashes(t *testing.T) {
	top := t.TempDir()
	dir := filepath.Join(top, "audit")
	if _, err := Write(dir, testResult(t, nil), WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	input := filepath.Join(top, "plan.yaml")
	os.WriteFile(input, []byte("keep"), 0o644)
	for name, tc := range map[string]struct {
		extras []atomicfile.File
		inputs []string
		want   string
	}{
		"extra over audit.json":   {[]atomicfile.File{{Path: filepath.Join(dir, "audit.json"), Data: []byte("log")}}, nil, "are the same path"},
		"two extras at one path":  {[]atomicfile.File{{Path: filepath.Join(top, "x"), Data: nil}, {Path: filepath.Join(top, "x")}}, nil, "are the same path"},
		"extra over an input":     {[]atomicfile.File{{Path: input, Data: []byte("clobber")}}, []string{input}, "is the input"},
		"input inside the folder": {nil, []string{filepath.Join(dir, "report.md")}, "is the input"},
		"extra below the folder":  {[]atomicfile.File{{Path: filepath.Join(dir, "sub", "x.yaml")}}, nil, "lies in a folder inside"},
		// Not there yet (a history store the write would create): it
		// would be lost when the folder is replaced.
		"new input inside the folder": {nil, []string{filepath.Join(dir, "h.sqlite")}, "lies inside the output folder"},
	} {
		r := testResult(t, nil, tc.extras...)
		if _, err := Write(dir, r, WriteOptions{Inputs: tc.inputs}); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want %q", name, err, tc.want)
		}
	}
	if b, _ := os.ReadFile(input); string(b) != "keep" {
		t.Errorf("the input was overwritten: %q", b)
	}
	store := filepath.Join(dir, "h.sqlite")
	if _, err := Write(dir, testResult(t, nil), WriteOptions{History: store}); err == nil || !strings.Contains(err.Error(), "lies inside the output folder") {
		t.Errorf("a new history store inside the folder: error %v", err)
	}
	if _, err := os.Stat(store); err == nil {
		t.Error("the history store was created inside the folder")
	}
}

// TestWriteHistoryFailureLeavesNothing: when the history record cannot
// be written, the earlier audit stays as it was and nothing new appears.
func TestWriteHistoryFailureLeavesNothing(t *testing.T) {
	top := t.TempDir()
	dir := filepath.Join(top, "audit")
	extra := filepath.Join(top, "shrunk.yaml")
	if _, err := Write(dir, testResult(t, []string{"subgroups.svg"}, atomicfile.File{Path: extra, Data: []byte("first")}), WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	before := names(t, dir)
	// A store whose table the record does not fit: the insert fails
	// after the outputs are staged.
	store := filepath.Join(top, "store")
	if err := history.Append(store, history.Record{AuditDate: "2026-01-01", Model: "m", JSON: "{}", Verdict: "pass"}); err != nil {
		t.Fatal(err)
	}
	db, err := sql.Open("sqlite", store)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec(`CREATE TRIGGER refuse BEFORE INSERT ON audits BEGIN SELECT RAISE(ABORT, 'the store refuses new records'); END`); err != nil {
		t.Fatal(err)
	}
	db.Close()
	_, err = Write(dir, testResult(t, nil, atomicfile.File{Path: extra, Data: []byte("second")}), WriteOptions{History: store})
	if err == nil || !strings.Contains(err.Error(), "the store refuses new records") {
		t.Fatalf("error %v", err)
	}
	if got := names(t, dir); !reflect.DeepEqual(got, before) {
		t.Errorf("the folder changed to %v", got)
	}
	if b, _ := os.ReadFile(extra); string(b) != "first" {
		t.Errorf("the extra file changed to %q", b)
	}
	if got := names(t, top); !reflect.DeepEqual(got, []string{"audit", "shrunk.yaml", "store"}) && !reflect.DeepEqual(got, []string{"audit", "shrunk.yaml", "store", "store-shm", "store-wal"}) {
		t.Errorf("left beside the outputs: %v", got)
	}
}

// TestKilledWriteResolved: a write stopped after its folder was swapped
// in but before its history record was committed is undone by the next
// write into the folder (the earlier audit and files come back); one
// stopped after the commit is kept and completed.
func TestKilledWriteResolved(t *testing.T) {
	for _, stop := range []string{"swapped", "recorded"} {
		top := t.TempDir()
		dir := filepath.Join(top, "audit")
		extra := filepath.Join(top, "updated.yaml")
		store := filepath.Join(top, "h.sqlite")
		if _, err := Write(dir, testResult(t, []string{"subgroups.svg"}, atomicfile.File{Path: extra, Data: []byte("first")}), WriteOptions{History: store}); err != nil {
			t.Fatal(err)
		}
		first := names(t, dir)
		r := testResult(t, []string{"roc.svg"}, atomicfile.File{Path: extra, Data: []byte("second")})
		rec, err := historyRecord("2026-12-01", r)
		if err != nil {
			t.Fatal(err)
		}
		js, md := []byte("{}"), []byte("second audit")
		fw := &folderWrite{dir: dir, kind: "audit", written: r.Started, files: []atomicfile.File{{Path: "report.md", Data: md}, {Path: "audit.json", Data: js}, {Path: "roc.svg", Data: []byte("<svg/>")}},
			extras: r.Files, record: &rec, history: store, stopAt: stop}
		if _, err := fw.write(); !errors.Is(err, errStopped) {
			t.Fatalf("%s: %v", stop, err)
		}
		if m, err := readManifest(dir); err != nil || m.State != "pending" {
			t.Fatalf("%s: the stopped write's manifest is %+v (%v)", stop, m, err)
		}
		if err := resolvePending(dir); err != nil {
			t.Fatalf("%s: resolving: %v", stop, err)
		}
		recs, err := history.Read(store)
		if err != nil {
			t.Fatal(err)
		}
		b, _ := os.ReadFile(extra)
		m, _ := readManifest(dir)
		switch stop {
		case "swapped":
			if got := names(t, dir); !reflect.DeepEqual(got, first) || string(b) != "first" || len(recs) != 1 {
				t.Errorf("undone: folder %v (want %v), extra %q, %d records", got, first, b, len(recs))
			}
		case "recorded":
			if got := names(t, dir); !slices.Contains(got, "roc.svg") || string(b) != "second" || len(recs) != 2 || m.State != "done" {
				t.Errorf("completed: folder %v, extra %q, %d records, state %s", got, b, len(recs), m.State)
			}
		}
		if got := names(t, top); !reflect.DeepEqual(got, []string{"audit", "h.sqlite", "h.sqlite-shm", "h.sqlite-wal", "updated.yaml"}) &&
			!reflect.DeepEqual(got, []string{"audit", "h.sqlite", "updated.yaml"}) {
			t.Errorf("%s: left beside the outputs: %v", stop, got)
		}
	}
}

// TestManifestTemporariesOfAKilledRun: a run killed while it rewrote the
// folder's manifest as done (markDone) leaves the manifest's temporary
// and its hard-linked old copy inside the folder. The next audit into the
// folder, its check before the run (CheckWrite) and its write, must take
// them for riskaudit's own and remove them, not refuse the folder as
// holding files riskaudit did not write.
func TestManifestTemporariesOfAKilledRun(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "audit")
	if _, err := Write(dir, testResult(t, []string{"roc.svg"}), WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	dead := exec.Command("true")
	if err := dead.Run(); err != nil {
		t.Fatal(err)
	}
	pid := strconv.Itoa(dead.Process.Pid)
	// The names atomicfile gives a temporary beside .riskaudit.json.
	left := []string{"." + manifestName + ".riskaudit-tmp-" + pid + "-0a1b2c3d4e5f", "." + manifestName + ".riskaudit-old-" + pid + "-5f4e3d2c1b0a"}
	for _, n := range left {
		if err := os.WriteFile(filepath.Join(dir, n), []byte("{}"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := CheckWrite(dir, &Config{}, WriteOptions{}); err != nil {
		t.Fatalf("the check before the run: %v", err)
	}
	for _, n := range left {
		if err := os.WriteFile(filepath.Join(dir, n), []byte("{}"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := Write(dir, testResult(t, []string{"roc.svg"}), WriteOptions{}); err != nil {
		t.Fatalf("the write: %v", err)
	}
	if got := names(t, dir); !reflect.DeepEqual(got, []string{".riskaudit.json", "audit.json", "report.html", "report.md", "roc.svg"}) {
		t.Errorf("the folder holds %v", got)
	}
}
