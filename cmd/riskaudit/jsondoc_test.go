package main

import (
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// TestAuditJSONKeysDocumented runs an audit with every analysis switched
// on (a recipe fitted on the development data, internal validation,
// percentile intervals, subgroups, updating) and checks that every key
// path of its audit.json is listed in docs/audit-json.md, so the
// machine-readable output never grows an undocumented key.
func TestAuditJSONKeysDocumented(t *testing.T) {
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	demo := filepath.Join(dir, "demo")
	if err := runDemo(demo, s); err != nil {
		t.Fatal(err)
	}
	o := quietAudit(filepath.Join(demo, "recipe.yaml"), filepath.Join(demo, "later.csv"), filepath.Join(dir, "audit"))
	o.devFile = filepath.Join(demo, "development.csv")
	o.bootstrap, o.seed, o.ciBootstrap = 20, 1, 20
	o.subgroups, o.minSubEvents = []string{"sex", "smoker"}, 20
	o.update, o.updateAlpha, o.updateBootstrap = filepath.Join(dir, "updated.yaml"), 0.05, 20
	if err := runAudit(o, s); err != nil {
		if _, ok := err.(*criterionError); !ok {
			t.Fatal(err)
		}
	}
	raw, err := os.ReadFile(filepath.Join(dir, "audit", "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc any
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	paths := map[string]bool{}
	jsonPaths(doc, "", paths)
	md, err := os.ReadFile("../../docs/audit-json.md")
	if err != nil {
		t.Fatal(err)
	}
	listed := string(md)
	var missing []string
	for p := range paths {
		// The development data's measures have the cohort's keys.
		p = strings.TrimPrefix(p, "development.measures.")
		if !strings.Contains(listed, "`"+p+"`") {
			missing = append(missing, p)
		}
	}
	sort.Strings(missing)
	if len(paths) < 200 {
		t.Errorf("only %d key paths: the audit did not run every analysis", len(paths))
	}
	if len(missing) > 0 {
		t.Errorf("audit.json keys not in docs/audit-json.md:\n%s", strings.Join(missing, "\n"))
	}
}

// jsonPaths collects the key path of every value: objects' keys joined by
// dots, arrays of objects as key[], arrays of numbers or strings as the
// key alone.
func jsonPaths(v any, prefix string, out map[string]bool) {
	switch v := v.(type) {
	case map[string]any:
		for k, c := range v {
			p := k
			if prefix != "" {
				p = prefix + "." + k
			}
			jsonPaths(c, p, out)
		}
	case []any:
		leaf := true
		for _, c := range v {
			if _, ok := c.(map[string]any); ok {
				leaf = false
				jsonPaths(c, prefix+"[]", out)
			}
		}
		if leaf {
			out[prefix] = true
		}
	default:
		out[prefix] = true
	}
}
