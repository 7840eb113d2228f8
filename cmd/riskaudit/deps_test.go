package main

import (
	"os/exec"
	"strings"
	"testing"
)

// TestBinaryDependencies: the binary links no package whose
// initialisation serves a feature riskaudit does not have. Every linked
// package's init runs at every start, `riskaudit --version` included, and
// the Arrow library's Parquet-to-Arrow bridge (pqarrow) links its RPC
// framework (Arrow Flight over gRPC, with protobuf), which cost about
// half of the start-up time; the Parquet reader and writer use the
// library's column readers and writers instead (cohort/parquetread.go).
// Workbooks are read and written with archive/zip and encoding/xml
// (cohort/xlsxpkg.go), not excelize, whose formula, number-format and
// legacy-format packages initialised large tables at every start.
// Markdown tables are parsed by htmlreport/mdtable, not goldmark's
// extension package, which compiles its link-detection regular
// expressions at every start (its ast sub-package, only types, is kept).
func TestBinaryDependencies(t *testing.T) {
	if testing.Short() {
		t.Skip("runs go list")
	}
	goTool, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("the go command, which lists the binary's packages: %v", err)
	}
	out, err := exec.Command(goTool, "list", "-deps", ".").Output()
	if err != nil {
		t.Fatalf("go list -deps: %v", err)
	}
	deps := strings.Fields(string(out))
	if len(deps) < 100 || !contains(deps, "github.com/apache/arrow-go/v18/parquet/file") {
		t.Fatalf("go list -deps gave %d packages, without the Parquet reader: %q", len(deps), firstN(deps, 5))
	}
	forbidden := []string{
		"google.golang.org/grpc",
		"google.golang.org/protobuf",
		"github.com/apache/arrow-go/v18/arrow/flight",
		"github.com/apache/arrow-go/v18/parquet/pqarrow",
		"github.com/xuri/excelize",
		"github.com/xuri/efp",
		"github.com/xuri/nfp",
		"github.com/richardlehane/mscfb",
		"github.com/richardlehane/msoleps",
		"github.com/yuin/goldmark/extension",
	}
	for _, d := range deps {
		for _, f := range forbidden {
			if d == f || strings.HasPrefix(d, f+"/") && d != "github.com/yuin/goldmark/extension/ast" {
				t.Errorf("the binary links %s (under %s)", d, f)
			}
		}
	}
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func firstN(list []string, n int) []string { return list[:min(n, len(list))] }
