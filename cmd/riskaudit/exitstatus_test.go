package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"

	"github.com/spf13/cobra"
)

// wantExits are the exit statuses each command can return, read from
// its code paths (which errors it can meet, and exitCode's mapping of
// them); 130 stands for 130 and 143. Written out here, apart from the
// tables the commands declare, so that a table that drifts from the
// code fails TestExitStatusHelp, and TestExitStatusReached makes each
// one happen.
var wantExits = map[string][]int{
	"riskaudit audit":          {0, 1, 2, 3, 4, 5, 130},
	"riskaudit fit":            {0, 2, 3, 4, 5, 130},
	"riskaudit score":          {0, 2, 3, 5, 130},
	"riskaudit compare":        {0, 2, 3, 5, 130},
	"riskaudit samplesize":     {0, 2, 3, 5, 130},
	"riskaudit demo":           {0, 2, 5, 130},
	"riskaudit trend":          {0, 2, 3, 5},
	"riskaudit plan":           {0, 2},
	"riskaudit plan init":      {0, 2, 5},
	"riskaudit plan check":     {0, 2, 3, 5},
	"riskaudit history":        {0, 2},
	"riskaudit history list":   {0, 2, 3, 5},
	"riskaudit history remove": {0, 2, 3, 5},
}

// helpExits reads the statuses of the "Exit status:" table of a help
// text: the number that starts each row (130 for "130, 143").
func helpExits(t *testing.T, help string) []int {
	t.Helper()
	_, table, ok := strings.Cut(help, "\nExit status:\n")
	if !ok {
		t.Fatalf("no exit-status table in\n%s", help)
	}
	table, _, _ = strings.Cut(table, "\n\n")
	var codes []int
	row := regexp.MustCompile(`^  (\d+)(, 143)?  \S`)
	for _, line := range strings.Split(table, "\n") {
		if m := row.FindStringSubmatch(line); m != nil {
			n, _ := strconv.Atoi(m[1])
			codes = append(codes, n)
		} else if !strings.HasPrefix(line, "     ") {
			t.Fatalf("line %q of the exit-status table is neither a row nor a continuation", line)
		}
	}
	return codes
}

// commandPaths lists every command below the root.
func commandPaths(c *cobra.Command) []string {
	var out []string
	for _, sub := range c.Commands() {
		out = append(out, sub.CommandPath())
		out = append(out, commandPaths(sub)...)
	}
	return out
}

// TestExitStatusHelp: each command's --help lists exactly the statuses
// it can return (wantExits), every command has a table, and the root's
// help lists all of them. The README's table is the root's.
func TestExitStatusHelp(t *testing.T) {
	root := newRootCmd(&streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}})
	paths := commandPaths(root)
	for _, p := range paths {
		if _, ok := wantExits[p]; !ok {
			t.Errorf("%s: no exit statuses in wantExits: read its code paths and add them", p)
		}
	}
	for p, want := range wantExits {
		if !slices.Contains(paths, p) {
			t.Errorf("wantExits names %s, which is no command", p)
			continue
		}
		var out bytes.Buffer
		args := append(strings.Fields(p)[1:], "--help")
		if code := run(context.Background(), args, &streams{out: &out, err: &bytes.Buffer{}}); code != 0 {
			t.Fatalf("%s --help: exit status %d", p, code)
		}
		if got := helpExits(t, out.String()); !slices.Equal(got, want) {
			t.Errorf("%s --help lists exit statuses %v, want %v", p, got, want)
		}
	}
	var out bytes.Buffer
	run(context.Background(), []string{"--help"}, &streams{out: &out, err: &bytes.Buffer{}})
	if got := helpExits(t, out.String()); !slices.Equal(got, []int{0, 1, 2, 3, 4, 5, 130}) {
		t.Errorf("riskaudit --help lists %v", got)
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	for _, row := range []string{"| 0 | success |", "| 1 |", "| 2 |", "| 3 |", "| 4 |", "| 5 |", "| 130, 143 |"} {
		if !strings.Contains(string(readme), "\n"+row) {
			t.Errorf("README's exit-status table has no row %q", row)
		}
	}
	for p, want := range wantExits {
		var s []string
		for _, c := range want {
			if c == 130 {
				s = append(s, "130, 143")
			} else {
				s = append(s, strconv.Itoa(c))
			}
		}
		row := "| `" + p + "` | " + strings.Join(s, ", ") + " |"
		if !strings.Contains(string(readme), "\n"+row+"\n") {
			t.Errorf("README has no row %q in its table of each command's statuses", row)
		}
	}
}

// failingWriter is a standard output that cannot be written (a full
// disk, a closed pipe).
type failingWriter struct{}

func (failingWriter) Write([]byte) (int, error) { return 0, syscall.ENOSPC }

// TestExitStatusReached makes every status of every command's table
// happen (wantExits), and no other: 0 and the command's own failures
// from files made here and from the demo's extracts; 2 by an unknown
// flag; 5 by a standard output that cannot be written; 130 by a context
// cancelled by SIGINT before the command starts, which a command that
// does not list 130 runs through to success instead.
func TestExitStatusReached(t *testing.T) {
	if testing.Short() {
		t.Skip("runs every command several times")
	}
	dir := t.TempDir()
	d := filepath.Join(dir, "d")
	quiet := func() *streams { return &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}} }
	// The demo's own success (status 0), and the files of every other
	// command line below.
	if code := run(context.Background(), []string{"demo", "--out", d}, quiet()); code != 0 {
		t.Fatalf("riskaudit demo: exit status %d", code)
	}
	in := func(name string) string { return filepath.Join(d, name) }
	at := func(name string) string { return filepath.Join(dir, name) }
	write := func(name string, b []byte) string {
		if err := os.WriteFile(at(name), b, 0o644); err != nil {
			t.Fatal(err)
		}
		return at(name)
	}
	// A development extract whose outcome is age above 65: separated.
	dev, err := os.ReadFile(in("development.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(dev)), "\n")
	for i := 1; i < len(lines); i++ {
		f := strings.Split(lines[i], ",")
		age, _ := strconv.Atoi(f[1])
		f[8] = map[bool]string{true: "yes", false: "no"}[age > 65]
		lines[i] = strings.Join(f, ",")
	}
	separated := write("separated.csv", []byte(strings.Join(lines, "\n")+"\n"))
	bad := write("bad.csv", []byte("patient_ref,age\nx,1\n"))
	notStore := write("notstore.sqlite", []byte("not a store\n"))
	badPlan := write("badplan.yaml", []byte("modle: x\n"))
	// A plan whose one criterion the demo's model meets.
	passPlan := write("pass.yaml", []byte("model: "+in("frozen.yaml")+"\ncohort: "+in("later.csv")+"\ncriteria:\n  - {measure: auc, at_least: 0.5}\n"))
	store := at("h.sqlite")
	if code := run(context.Background(), []string{"audit", "--model", in("frozen.yaml"), "--cohort", in("later.csv"), "--out", at("recorded"), "--history", store, "--audit-date", "2026-11-30", "-q"}, quiet()); code != 1 {
		t.Fatalf("the audit recorded in the store: exit status %d", code)
	}
	storeBytes, err := os.ReadFile(store)
	if err != nil {
		t.Fatal(err)
	}
	// success is a command line of p that succeeds, its outputs (and a
	// store it changes) named by tag so that no run meets another's.
	success := func(p, tag string) []string {
		out := func(name string) string { return at(tag + "-" + name) }
		switch p {
		case "riskaudit audit":
			return []string{"audit", "--plan", passPlan, "--out", out("audit")}
		case "riskaudit fit":
			return []string{"fit", "--model", in("recipe.yaml"), "--data", in("development.csv"), "--out", out("frozen.yaml")}
		case "riskaudit score":
			return []string{"score", "--model", in("frozen.yaml"), "--data", in("later.csv"), "--out", out("scored.csv")}
		case "riskaudit compare":
			return []string{"compare", "--model", in("frozen.yaml"), "--model", in("frozen.yaml"), "--cohort", in("later.csv"), "--ci-bootstrap", "100", "--out", out("compare")}
		case "riskaudit samplesize":
			return []string{"samplesize", "--model", in("frozen.yaml"), "--data", in("later.csv"), "--json", out("size.json")}
		case "riskaudit demo":
			return []string{"demo", "--out", out("demo")}
		case "riskaudit trend":
			return []string{"trend", "--history", store, "--out", out("trend")}
		case "riskaudit plan init":
			return []string{"plan", "init", "--out", out("plan.yaml")}
		case "riskaudit plan check":
			return []string{"plan", "check", passPlan}
		case "riskaudit history list":
			return []string{"history", "list", "--history", store}
		case "riskaudit history remove":
			return []string{"history", "remove", "--history", write(tag+"-h.sqlite", storeBytes), "--record", "1"}
		}
		return strings.Fields(p)[1:] // a command that groups others
	}
	// owns are the command's own failures.
	owns := map[string]map[int][]string{
		"riskaudit audit": {
			1: {"audit", "--model", in("frozen.yaml"), "--cohort", in("later.csv"), "--out", at("a1"), "-q"},
			3: {"audit", "--model", in("frozen.yaml"), "--cohort", bad, "--out", at("a3")},
			4: {"audit", "--model", in("recipe.yaml"), "--dev", separated, "--out", at("a4")},
		},
		"riskaudit fit": {
			3: {"fit", "--model", in("recipe.yaml"), "--data", bad},
			4: {"fit", "--model", in("recipe.yaml"), "--data", separated},
		},
		"riskaudit score":          {3: {"score", "--model", in("recipe.yaml"), "--data", in("later.csv"), "--out", at("s3.csv")}},
		"riskaudit compare":        {3: {"compare", "--model", in("frozen.yaml"), "--model", in("frozen.yaml"), "--cohort", bad, "--out", at("c3")}},
		"riskaudit samplesize":     {3: {"samplesize", "--model", in("recipe.yaml"), "--data", in("later.csv")}},
		"riskaudit trend":          {3: {"trend", "--history", notStore, "--out", at("t3")}},
		"riskaudit plan check":     {3: {"plan", "check", badPlan}},
		"riskaudit history list":   {3: {"history", "list", "--history", notStore}},
		"riskaudit history remove": {3: {"history", "remove", "--history", write("h3.sqlite", storeBytes), "--record", "99"}},
	}
	signalled := func() context.Context {
		ctx, cancel := context.WithCancelCause(context.Background())
		cancel(&interrupted{syscall.SIGINT})
		return ctx
	}
	for p, want := range wantExits {
		t.Run(strings.ReplaceAll(p, " ", "_"), func(t *testing.T) {
			reached := map[int]bool{}
			try := func(want int, args []string, s *streams, ctx context.Context) {
				t.Helper()
				got := run(ctx, args, s)
				reached[got] = true
				if got != want {
					t.Errorf("exit status %d, want %d: riskaudit %s", got, want, strings.Join(args, " "))
				}
			}
			if p == "riskaudit demo" {
				reached[0] = true // above, once: it is the longest run
			} else {
				try(0, success(p, "ok"), quiet(), context.Background())
			}
			for code, args := range owns[p] {
				try(code, args, quiet(), context.Background())
			}
			words := len(strings.Fields(p)) - 1
			try(2, append(success(p, "usage")[:words:words], "--no-such-flag"), quiet(), context.Background())
			if slices.Contains(want, 5) {
				try(5, success(p, "stdout"), &streams{out: &checkedWriter{w: failingWriter{}}, err: &bytes.Buffer{}}, context.Background())
			}
			if slices.Contains(want, 130) {
				try(130, success(p, "signal"), quiet(), signalled())
			} else {
				try(0, success(p, "signal"), quiet(), signalled())
			}
			for _, c := range want {
				if !reached[c] {
					t.Errorf("exit status %d of its table was not made to happen", c)
				}
			}
		})
	}
}
