package plan

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// FuzzParsePlan: a plan never panics the parser; a plan refused is an
// *Error of a listed kind with a message of bounded length; a plan read
// has only known keys set, an audit_date that is a calendar date, and
// renames between non-empty names, no two to one.
//
// Seeds: the starter plan and the plan seeds in testdata/fuzz at the
// repository's top.
func FuzzParsePlan(f *testing.F) {
	f.Add([]byte(Starter))
	names, err := filepath.Glob("../testdata/fuzz/plan-*.yaml")
	if err != nil || len(names) < 2 {
		f.Fatalf("plan seeds: %v %v", names, err)
	}
	for _, n := range names {
		b, err := os.ReadFile(n)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	known := map[string]bool{}
	for _, k := range topKeys {
		known[k] = true
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := Parse("fuzz.yaml", data)
		if err != nil {
			var pe *Error
			if !errors.As(err, &pe) || pe.Kind == nil {
				t.Fatalf("not an *Error of a listed kind: %T %v", err, err)
			}
			if len(err.Error()) > 2000 {
				t.Fatalf("a message of %d bytes: %.200s…", len(err.Error()), err)
			}
			return
		}
		for k := range p.Set {
			top, _, nested := strings.Cut(k, ".")
			if !known[top] || (nested && top != "bootstrap" && top != "data" && top != "sample_size") {
				t.Fatalf("unknown key %q set", k)
			}
		}
		if p.Set["audit_date"] {
			if _, err := time.Parse(time.DateOnly, p.AuditDate); err != nil {
				t.Fatalf("audit_date %q read: %v", p.AuditDate, err)
			}
		}
		to := map[string]bool{}
		for from, name := range p.Rename {
			if from == "" || name == "" || to[name] {
				t.Fatalf("rename %q to %q read (renames %v)", from, name, p.Rename)
			}
			to[name] = true
		}
	})
}
