package plan

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/cohort"
)

// ClusterFile is one file of the plan's cluster_files: a cohort file
// whose rows are one cluster.
type ClusterFile struct {
	// Name is the cluster's name: the mapping's key, or the file's base
	// name without its extension for a list of paths.
	Name string
	// Path is the file, relative to the working folder once the plan is
	// read (a relative path in the plan is taken from the plan's folder).
	Path string
	// Line is the line of the entry.
	Line int
}

// clusterFiles reads cluster_files, a mapping of cluster names to
// files or a list of files:
//
//	cluster_files:
//	  north: extracts/north-2026.csv
//	  south: extracts/south-2026.csv
//
//	cluster_files: [extracts/north.csv, extracts/south.csv]
func (p *parser) clusterFiles(v *yaml.Node) ([]ClusterFile, error) {
	var out []ClusterFile
	seen := map[string]int{}
	add := func(name string, pathNode *yaml.Node) error {
		path, err := p.str(pathNode, "cluster_files")
		if err != nil {
			return err
		}
		if strings.TrimSpace(path) == "" {
			return p.errf(ErrValue, pathNode, "cluster_files: the file of cluster %s is empty", cohort.Quote(name))
		}
		if name == "" {
			name = strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
		}
		if strings.TrimSpace(name) != name || name == "" {
			return p.errf(ErrValue, pathNode, "cluster_files: a cluster's name must not be empty or start or end with a space, not %s", cohort.Quote(name))
		}
		if first, ok := seen[name]; ok {
			return p.errf(ErrValue, pathNode, "cluster_files: the cluster %s appears twice (first on line %d); name the files with a mapping NAME: PATH", cohort.Quote(name), first)
		}
		seen[name] = pathNode.Line
		out = append(out, ClusterFile{Name: name, Path: path, Line: pathNode.Line})
		return nil
	}
	switch v.Kind {
	case yaml.MappingNode:
		for i := 0; i+1 < len(v.Content); i += 2 {
			if err := add(v.Content[i].Value, v.Content[i+1]); err != nil {
				return nil, err
			}
		}
	case yaml.SequenceNode:
		for _, n := range v.Content {
			if err := add("", n); err != nil {
				return nil, err
			}
		}
	default:
		return nil, p.errf(ErrValue, v, "cluster_files must be a mapping of cluster names to files, or a list of files")
	}
	if len(out) < 2 {
		return nil, p.errf(ErrValue, v, "cluster_files: give at least two files (one file is a cohort: give it as cohort)")
	}
	return out, nil
}

// checkClusterFiles refuses cluster_files beside cohort, a cohort query
// or cluster (the files are the cohort and name the clusters), and takes
// the files' relative paths from dir, the plan's folder.
func (p *parser) checkClusterFiles(pl *Plan, dir string) error {
	if !pl.Set["cluster_files"] {
		return nil
	}
	for _, k := range []string{"cohort", "cohort_query", "cohort_query_file", "cluster"} {
		if pl.Set[k] {
			return &Error{File: p.file, Line: pl.Lines[k], Msg: k + ": the plan gives cluster_files (line " + strconv.Itoa(pl.Lines["cluster_files"]) + "), which are the cohort and its clusters; give one or the other", Kind: ErrValue}
		}
	}
	for i, f := range pl.ClusterFiles {
		if !filepath.IsAbs(f.Path) {
			pl.ClusterFiles[i].Path = filepath.Join(dir, f.Path)
		}
	}
	return nil
}

// CheckClusterOptions refuses a clusters section in a plan that names no
// cluster column and no cluster files, whose options would otherwise be
// ignored: a *Error at the section's line. The command line calls it
// only when no flag gives the clusters either; plan check always.
func (pl *Plan) CheckClusterOptions() error {
	if pl.Set["cluster"] || pl.Set["cluster_files"] {
		return nil
	}
	for k := range pl.Set {
		if strings.HasPrefix(k, "clusters.") || k == "clusters" {
			return &Error{File: pl.File, Line: pl.Lines["clusters"], Msg: "clusters: these are options of the analysis across clusters, but the plan names no cluster column (cluster) or cluster files (cluster_files)", Kind: ErrValue}
		}
	}
	return nil
}

// CheckClusterFiles checks that every cluster file can be read, and says
// which entry of cluster_files named it (its line) when one cannot.
func (pl *Plan) CheckClusterFiles() error {
	for _, f := range pl.ClusterFiles {
		fail := func(format string, args ...any) error {
			return &Error{File: pl.File, Line: f.Line, Msg: "cluster_files: " + f.Name + ": " + fmt.Sprintf(format, args...), Kind: ErrRead}
		}
		fi, err := os.Stat(f.Path)
		switch {
		case err != nil:
			var pe *os.PathError
			if errors.As(err, &pe) {
				err = pe.Err
			}
			return fail("%s: %v", f.Path, err)
		case fi.IsDir():
			return fail("%s is a folder, not a file", f.Path)
		}
		r, err := os.Open(f.Path)
		if err != nil {
			return fail("%s: cannot be read: %v", f.Path, errors.Unwrap(err))
		}
		r.Close()
	}
	return nil
}
