package audit_test

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// demoAudit is the demo's frozen model on its later extract, beside the
// development data.
func demoAudit(d fixture.Demo) audit.Config {
	return audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Dev: audit.Input{Path: d.Development}, Tool: "riskaudit test"}
}

// auditJSON is the audit as audit.json holds it, without its provenance
// (which names the inputs as given).
func auditJSON(t *testing.T, a *validate.Audit) map[string]any {
	t.Helper()
	b, err := jsonout.Marshal(a)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "provenance")
	return m
}

// TestFramesAsInputs: an audit of frames already read is the audit of
// the files they were read from.
func TestFramesAsInputs(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	cfg := demoAudit(d)
	fromFiles, err := audit.Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	spec, err := model.LoadSpec(d.Frozen)
	if err != nil {
		t.Fatal(err)
	}
	frame := func(path string) *cohort.Frame {
		fr, err := cohort.Load(path, spec.Columns(true), cohort.Options{})
		if err != nil {
			t.Fatal(err)
		}
		return fr
	}
	cfg.Spec = spec
	cfg.Cohort = audit.Input{Path: d.Later, Frame: frame(d.Later), SHA256: "not checked"}
	// The frozen model's provenance names the development file's SHA-256;
	// given with the frame, it marks the frame as the data the model was
	// fitted to, as the file is.
	cfg.Dev = audit.Input{Path: d.Development, Frame: frame(d.Development), SHA256: sha256File(t, d.Development)}
	fromFrames, err := audit.Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	if a, b := auditJSON(t, fromFiles.Audit), auditJSON(t, fromFrames.Audit); !reflect.DeepEqual(a, b) {
		t.Error("the audit of frames differs from the audit of their files")
	}
	if len(fromFrames.Figures) != len(fromFiles.Figures) {
		t.Errorf("%d figures from frames, %d from files", len(fromFrames.Figures), len(fromFiles.Figures))
	}
	// A frame without a column the model needs is refused.
	cfg.Cohort.Frame, err = cohort.Load(d.Later, []cohort.Request{{Name: "age", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var ce *audit.ConfigError
	if _, err := audit.Run(ctx, cfg); !errors.As(err, &ce) || !strings.Contains(err.Error(), `has no categorical column "ppc_30d"`) {
		t.Errorf("a frame without a needed column: %v", err)
	}
}

func sha256File(t *testing.T, path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// TestCancel: a cancelled or expired context stops a long bootstrap
// promptly with the context's error, and Run returns no result.
func TestCancel(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	for _, tc := range []struct {
		name string
		ctx  func() (context.Context, context.CancelFunc)
		want error
	}{
		{"cancel", func() (context.Context, context.CancelFunc) {
			ctx, cancel := context.WithCancel(context.Background())
			time.AfterFunc(200*time.Millisecond, cancel)
			return ctx, cancel
		}, context.Canceled},
		{"deadline", func() (context.Context, context.CancelFunc) {
			return context.WithTimeout(context.Background(), 200*time.Millisecond)
		}, context.DeadlineExceeded},
	} {
		for _, what := range []string{"bootstrap", "ci-bootstrap"} {
			ctx, cancel := tc.ctx()
			cfg := demoAudit(d)
			if what == "bootstrap" {
				cfg.Bootstrap = audit.MaxReplicates // many minutes of work
			} else {
				cfg.CIBootstrap = audit.MaxReplicates
			}
			start := time.Now()
			res, err := audit.Run(ctx, cfg)
			cancel()
			if !errors.Is(err, tc.want) || res != nil {
				t.Errorf("%s during the %s: result %v, error %v; want %v", tc.name, what, res != nil, err, tc.want)
			}
			if el := time.Since(start); el > 10*time.Second {
				t.Errorf("%s during the %s: stopped after %v", tc.name, what, el)
			}
		}
	}
}

// recorder is a Progress that keeps what it hears.
type recorder struct {
	mu     sync.Mutex
	steps  []string
	counts map[string][]int
	done   int
}

func (r *recorder) Step(what string) { r.mu.Lock(); r.steps = append(r.steps, what); r.mu.Unlock() }
func (r *recorder) Count(what string, done, total int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.counts == nil {
		r.counts = map[string][]int{}
	}
	r.counts[what] = append(r.counts[what], done, total)
}
func (r *recorder) Done() { r.mu.Lock(); r.done++; r.mu.Unlock() }

// TestProgress: the Config's Progress hears every step, counts the
// bootstrap's replicates up to the total, and is told once that the run
// is done.
func TestProgress(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	cfg := demoAudit(d)
	cfg.Bootstrap = 12
	rec := &recorder{}
	cfg.Progress = rec
	if _, err := audit.Run(context.Background(), cfg); err != nil {
		t.Fatal(err)
	}
	want := []string{"fitting on the development data " + d.Development, "measuring the development data " + d.Development,
		"reading and scoring " + d.Later, "measuring", "comparing case-mix", "drawing figures"}
	if !reflect.DeepEqual(rec.steps, want) {
		t.Errorf("steps %q, want %q", rec.steps, want)
	}
	c := rec.counts["bootstrap"]
	if len(c) != 2*12 || c[len(c)-2] != 12 || c[len(c)-1] != 12 {
		t.Errorf("bootstrap counts %v: want 12 counts ending at 12 of 12", c)
	}
	if rec.done != 1 {
		t.Errorf("Done called %d times", rec.done)
	}
}

// TestConfigErrors: contradictory options are refused with a
// *ConfigError before anything is read.
func TestConfigErrors(t *testing.T) {
	in := audit.Input{Path: "no-such-file.csv"}
	pred := &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes"}
	for _, tc := range []struct {
		cfg  audit.Config
		want string
	}{
		{audit.Config{Cohort: in}, "give either --model"},
		{audit.Config{Model: "m.yaml", Predicted: pred, Cohort: in}, "give either --model"},
		{audit.Config{Predicted: &audit.Predicted{Column: "risk"}, Cohort: in}, "--predicted needs --outcome and --event"},
		{audit.Config{Predicted: &audit.Predicted{Column: "y", Outcome: "y", Event: "1"}, Cohort: in}, "name the same column"},
		{audit.Config{Model: "m.yaml"}, "give the cohort to audit"},
		{audit.Config{Model: "m.yaml", Cohort: in, Bootstrap: 100}, "--bootstrap resamples the development data"},
		{audit.Config{Model: "m.yaml", Dev: in, Bootstrap: 5}, "give at least 10 replicates"},
		{audit.Config{Model: "m.yaml", Cohort: in, CIBootstrap: 5}, "give at least 20 replicates"},
		{audit.Config{Model: "m.yaml", Cohort: in, Shrunken: "s.yaml"}, "add --bootstrap N"},
		{audit.Config{Predicted: pred, Dev: in}, "--predicted needs --cohort"},
		{audit.Config{Predicted: pred, Cohort: in, Update: "u.yaml"}, "--update updates a model on the cohort"},
	} {
		_, err := audit.Run(context.Background(), tc.cfg)
		var ce *audit.ConfigError
		if !errors.As(err, &ce) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%+v: error %v, want a ConfigError with %q", tc.cfg, err, tc.want)
		}
	}
}

// TestWriteAllOrNothing: when one output cannot be written, none of the
// audit's files appears.
func TestWriteAllOrNothing(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	cfg := demoAudit(d)
	cfg.Update = filepath.Join(t.TempDir(), "no-such-folder", "updated.yaml")
	res, err := audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "audit")
	if _, err := audit.Write(out, res, audit.WriteOptions{}); err == nil {
		t.Fatal("the updated model's folder does not exist, yet Write succeeded")
	}
	if entries, _ := os.ReadDir(out); len(entries) != 0 {
		t.Errorf("a failed Write left %d files", len(entries))
	}
	if _, err := audit.Write(d.Later, res, audit.WriteOptions{}); err == nil {
		t.Error("Write into a file that is not a folder succeeded")
	}
}

// TestParquetAuditMatchesCSV audits the demo's later extract as CSV and as
// Parquet: every measure agrees.
func TestParquetAuditMatchesCSV(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	pq := filepath.Join(d.Dir, "later.parquet")
	fixture.ToParquet(t, d.Later, pq, 1000)
	var got [2]map[string]any
	for k, in := range []string{d.Later, pq} {
		res, err := audit.Run(context.Background(), audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: in}})
		if err != nil {
			t.Fatal(err)
		}
		got[k] = auditJSON(t, res.Audit)
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

// TestErrorKinds: Run's errors keep their kinds and causes for
// errors.Is and errors.As.
func TestErrorKinds(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	oneOutcome := filepath.Join(d.Dir, "one-outcome.csv")
	if err := os.WriteFile(oneOutcome, []byte("risk,died\n0.1,no\n0.2,no\n0.3,no\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	pred := &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes"}
	for _, tc := range []struct {
		name string
		cfg  audit.Config
		kind []error
	}{
		{"missing cohort file", audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: filepath.Join(d.Dir, "absent.csv")}},
			[]error{cohort.ErrRead, os.ErrNotExist}},
		{"recipe without development data", audit.Config{Model: d.Recipe, Cohort: audit.Input{Path: d.Later}}, []error{model.ErrNotFrozen}},
		{"one outcome", audit.Config{Predicted: pred, Cohort: audit.Input{Path: oneOutcome}}, []error{cohort.ErrOutcome}},
	} {
		_, err := audit.Run(context.Background(), tc.cfg)
		for _, k := range tc.kind {
			if !errors.Is(err, k) {
				t.Errorf("%s: %v is not %v", tc.name, err, k)
			}
		}
	}
	_, err := audit.Compare(context.Background(), audit.CompareConfig{Models: []string{d.Recipe, d.Frozen}, Cohort: audit.Input{Path: d.Later}})
	if !errors.Is(err, model.ErrNotFrozen) {
		t.Errorf("compare with a recipe: %v", err)
	}
}
