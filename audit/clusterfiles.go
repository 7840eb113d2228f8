package audit

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"path/filepath"
	"slices"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// ClusterFile is one cohort file of an audit whose clusters are files
// (ClusterConfig.Files): every row of the file belongs to the cluster
// Name.
type ClusterFile struct {
	// Name is the cluster's name in the report; empty takes the file's
	// base name without its extension (ClusterFileName).
	Name string
	// Input is the file (or frame, or source) of the cluster's rows.
	Input Input
}

// ClusterFilesLabel is what the report calls the clusters when they are
// files (in place of a cluster column's name): "Across `cluster`".
const ClusterFilesLabel = "cluster"

// ClusterFileRole is the role of each cluster file in
// provenance.inputs; the "cohort" input then names all the files
// together.
const ClusterFileRole = "cluster file"

// ClusterFileName is the cluster name a file gives when none is given:
// its base name without the extension ("extracts/north.csv" → "north").
func ClusterFileName(path string) string {
	base := filepath.Base(path)
	if ext := filepath.Ext(base); ext != "" && ext != base {
		base = strings.TrimSuffix(base, ext)
	}
	return base
}

// hasCohort reports whether the audit has a cohort besides the
// development data: Cohort, or cluster files.
func (c *Config) hasCohort() bool { return c.Cohort.given() || len(c.Clusters.Files) > 0 }

// audits reports whether the audit has data of its own to audit beside
// any development data (a cohort, cluster files or imputed files): then
// the columns only the audited data need (cluster, date, imputation) are
// not asked of the development data.
func (c *Config) audits() bool { return c.hasCohort() || c.Imputation.given() }

// clusterFiles are the cluster files with every name filled in.
func (c *Config) clusterFiles() []ClusterFile {
	out := slices.Clone(c.Clusters.Files)
	for i := range out {
		out[i].Input = out[i].Input.named()
		if out[i].Name == "" {
			out[i].Name = ClusterFileName(out[i].Input.Path)
		}
	}
	return out
}

// checkClusterFiles refuses cluster files given with a cohort or a
// cluster column, fewer than two of them, and two of one name.
func (c *Config) checkClusterFiles() error {
	files := c.clusterFiles()
	if len(files) == 0 {
		return nil
	}
	switch {
	case c.Clusters.Column != "":
		return configErrorf("--cluster %s and --cluster-file: give the clusters either as a column of the cohort or as files, not both", cohort.Quote(c.Clusters.Column))
	case c.Cohort.given():
		return configErrorf("--cluster-file and --cohort: the cluster files together are the cohort; give the cohort's rows as cluster files only")
	case len(files) < 2:
		return configErrorf("--cluster-file: give at least two files (one file is a cohort: give it with --cohort)")
	}
	seen := map[string]string{}
	for _, f := range files {
		if !f.Input.given() {
			return configErrorf("--cluster-file %s: give the file of the cluster", cohort.Quote(f.Name))
		}
		if f.Name == "" || strings.TrimSpace(f.Name) != f.Name {
			return configErrorf("--cluster-file %s: a cluster's name must not be empty or start or end with a space", cohort.Quote(f.Name))
		}
		if p, ok := seen[f.Name]; ok {
			return configErrorf("--cluster-file: the files %s and %s are both the cluster %s; name them with NAME=PATH", p, f.Input.Path, cohort.Quote(f.Name))
		}
		seen[f.Name] = f.Input.Path
	}
	return nil
}

// scoreClusterFiles reads and scores every cluster file as score does a
// cohort (so every error names its file) and joins them into one cohort
// whose cluster is the file: rows in the order of the files, subgroup
// and date levels merged, the frames joined when a later analysis reads
// them again.
func (c *Config) scoreClusterFiles(ctx context.Context, spec *model.Spec) (*scored, error) {
	files := c.clusterFiles()
	parts := make([]*scored, len(files))
	for i, f := range files {
		sc, err := c.score(ctx, spec, f.Input, true)
		if err != nil {
			return nil, err
		}
		parts[i] = sc
	}
	return joinScored(files, parts)
}

// joinScored joins the scored cluster files into one cohort.
func joinScored(files []ClusterFile, parts []*scored) (*scored, error) {
	n := 0
	for _, p := range parts {
		n += len(p.y)
	}
	out := &scored{y: make([]float64, 0, n), p: make([]float64, 0, n), terms: parts[0].terms}
	if parts[0].lp != nil {
		out.lp = make([]float64, 0, n)
	}
	names := make([]string, len(files))
	paths := make([]string, len(files))
	cl := validate.GroupColumn{Name: ClusterFilesLabel, Codes: make([]int32, 0, n)}
	var digest strings.Builder
	byColumn := map[string]int{}
	var columns []string
	for i, p := range parts {
		names[i], paths[i] = files[i].Name, p.file
		out.y, out.p = append(out.y, p.y...), append(out.p, p.p...)
		if out.lp != nil {
			out.lp = append(out.lp, p.lp...)
		}
		for range p.y {
			cl.Codes = append(cl.Codes, int32(i))
		}
		out.summary.Rows += p.summary.Rows
		out.summary.Excluded += p.summary.Excluded
		for _, e := range p.summary.ExcludedByColumn {
			if _, ok := byColumn[e.Column]; !ok {
				columns = append(columns, e.Column)
			}
			byColumn[e.Column] += e.Rows
		}
		for _, r := range p.renamed {
			if !slices.Contains(out.renamed, r) {
				out.renamed = append(out.renamed, r)
			}
		}
		out.ranges = append(out.ranges, p.ranges...)
		fmt.Fprintf(&digest, "%s\t%s\t%s\n", files[i].Name, p.hash, p.file)
	}
	cl.Levels = names
	out.cluster = &cl
	for _, col := range columns {
		out.summary.ExcludedByColumn = append(out.summary.ExcludedByColumn, validate.ColumnCount{Column: col, Rows: byColumn[col]})
	}
	sum := sha256.Sum256([]byte(digest.String()))
	out.hash = hex.EncodeToString(sum[:])
	out.file = strings.Join(paths, " + ")
	for g := range parts[0].groups {
		cols := make([]validate.GroupColumn, len(parts))
		for i, p := range parts {
			cols[i] = p.groups[g]
		}
		out.groups = append(out.groups, joinGroups(cols, n))
	}
	for b := range parts[0].bandValues {
		x := make([]float64, 0, n)
		for _, p := range parts {
			x = append(x, p.bandValues[b]...)
		}
		out.bandValues = append(out.bandValues, x)
	}
	if parts[0].dates != nil {
		out.dates = joinDates(parts, n)
	}
	if parts[0].frame != nil {
		frames := make([]*cohort.Frame, len(parts))
		for i, p := range parts {
			frames[i] = p.frame
		}
		out.frame = joinFrames(out.file, frames)
	}
	out.files = make([]validate.InputFile, len(parts))
	for i, p := range parts {
		out.files[i] = validate.InputFile{Role: ClusterFileRole, Cluster: files[i].Name, Path: p.file, Sheet: p.sheet, SHA256: p.hash, Query: p.query}
	}
	return out, nil
}

// joinGroups joins one subgroup column of every file: the levels of all
// files in the order a column's levels are sorted (cohort.SortLevels),
// each file's codes mapped to them.
func joinGroups(cols []validate.GroupColumn, n int) validate.GroupColumn {
	var levels []string
	for _, c := range cols {
		for _, l := range c.Levels {
			if !slices.Contains(levels, l) {
				levels = append(levels, l)
			}
		}
	}
	cohort.SortLevels(levels)
	out := validate.GroupColumn{Name: cols[0].Name, Levels: levels, Codes: make([]int32, 0, n)}
	for _, c := range cols {
		to := make([]int32, len(c.Levels))
		for k, l := range c.Levels {
			to[k] = int32(slices.Index(levels, l))
		}
		for _, code := range c.Codes {
			if code >= 0 {
				code = to[code]
			}
			out.Codes = append(out.Codes, code)
		}
	}
	return out
}

// joinDates joins the files' date columns, each row keeping its file and
// line for errors.
func joinDates(parts []*scored, n int) *dateColumn {
	d := &dateColumn{codes: make([]int32, 0, n), lines: make([]int, 0, n), fileOf: make([]int32, 0, n)}
	index := map[string]int32{}
	for i, p := range parts {
		src := p.dates
		d.files = append(d.files, src.file)
		to := remapLevels(index, &d.levels, src.levels, nil)
		for r, code := range src.codes {
			if code >= 0 {
				code = to[code]
			}
			d.codes = append(d.codes, code)
			d.lines = append(d.lines, src.lines[r])
			d.fileOf = append(d.fileOf, int32(i))
		}
	}
	d.file = strings.Join(d.files, " + ")
	return d
}

// remapLevels gives each of a file's levels src its code among the
// joined levels (index maps a joined level to its code), appending the
// levels not seen before, and calls added (when not nil) with the file's
// code of each new one.
func remapLevels(index map[string]int32, levels *[]string, src []string, added func(k int)) []int32 {
	to := make([]int32, len(src))
	for k, l := range src {
		code, ok := index[l]
		if !ok {
			code = int32(len(*levels))
			index[l] = code
			*levels = append(*levels, l)
			if added != nil {
				added(k)
			}
		}
		to[k] = code
	}
	return to
}

// joinFrames joins the files' frames, read with the same requests, into
// one frame named name whose rows are numbered in order (the case-mix
// comparison and the update read it; every row was already checked in
// its own file).
func joinFrames(name string, frames []*cohort.Frame) *cohort.Frame {
	rows := 0
	for _, f := range frames {
		rows += f.Rows
	}
	cols := make([]*cohort.Column, len(frames[0].Columns))
	header := make([]string, len(cols))
	for j, c0 := range frames[0].Columns {
		col := &cohort.Column{Name: c0.Name, Kind: c0.Kind, Index: j}
		header[j] = c0.Name
		if c0.Kind == cohort.Numeric {
			col.Num = make([]float64, 0, rows)
		} else {
			col.Codes = make([]int32, 0, rows)
		}
		index := map[string]int32{}
		at := 0
		for _, f := range frames {
			c := f.Column(c0.Name)
			col.Missing += c.Missing
			if c.Kind == cohort.Numeric {
				col.Num = append(col.Num, c.Num...)
				at += len(c.Num)
				continue
			}
			to := remapLevels(index, &col.Levels, c.Levels, func(k int) {
				first := slices.Index(c.Codes, int32(k))
				col.LevelLine = append(col.LevelLine, at+first+1)
			})
			for _, code := range c.Codes {
				if code >= 0 {
					code = to[code]
				}
				col.Codes = append(col.Codes, code)
			}
			at += len(c.Codes)
		}
		cols[j] = col
	}
	return cohort.NewFrame(name, header, rows, cols, nil)
}

// clusterPaths are the cluster files' paths, which outputs must not
// overwrite.
func (c *Config) clusterPaths() []string {
	var out []string
	for _, f := range c.Clusters.Files {
		out = append(out, f.Input.Path)
	}
	return out
}
