package main

import (
	"maps"
	"slices"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
)

// parseRenames reads the values of --rename, each OLD=NEW (split at the
// first '='): the column OLD of the files is read as NEW. The rules are
// the plan's: both names non-empty, no name renamed twice, no two names
// renamed to one.
func parseRenames(values []string) (map[string]string, error) {
	if len(values) == 0 {
		return nil, nil
	}
	out := map[string]string{}
	for _, v := range values {
		from, to, ok := strings.Cut(v, "=")
		switch {
		case !ok:
			return nil, usagef("--rename %s: give the column's name in the file and the name the model uses, as OLD=NEW", cohort.Quote(v))
		case from == "":
			return nil, usagef("--rename %s: the column name to rename is empty", cohort.Quote(v))
		case to == "":
			return nil, usagef("--rename %s: the new name of %s is empty", cohort.Quote(v), cohort.Quote(from))
		}
		if prev, twice := out[from]; twice {
			return nil, usagef("--rename: %s is renamed twice (to %s and to %s)", cohort.Quote(from), cohort.Quote(prev), cohort.Quote(to))
		}
		out[from] = to
	}
	if err := checkRenameTargets(out, nil); err != nil {
		return nil, err
	}
	return out, nil
}

// mergeRenames adds the renames typed on the command line to the plan's:
// a flag's rename of a name the plan renames too replaces the plan's. It
// returns the merged renames and where each came from ("flag" or
// "plan"), refusing two names renamed to one.
func mergeRenames(plan, flags map[string]string) (map[string]string, map[string]string, error) {
	if plan == nil && flags == nil {
		return nil, nil, nil
	}
	out, source := map[string]string{}, map[string]string{}
	for from, to := range plan {
		out[from], source[from] = to, "plan"
	}
	for from, to := range flags {
		out[from], source[from] = to, "flag"
	}
	if err := checkRenameTargets(out, source); err != nil {
		return nil, nil, err
	}
	return out, source, nil
}

// checkRenameTargets refuses two names renamed to one, naming where each
// rename came from when source says.
func checkRenameTargets(renames, source map[string]string) error {
	by := map[string]string{}
	for _, from := range slices.Sorted(maps.Keys(renames)) {
		to := renames[from]
		if first, ok := by[to]; ok {
			where := func(n string) string {
				if source[n] == "plan" {
					return " (in the plan)"
				}
				if source[n] == "flag" {
					return " (by --rename)"
				}
				return ""
			}
			return usagef("--rename: %s%s and %s%s are both renamed to %s", cohort.Quote(first), where(first), cohort.Quote(from), where(from), cohort.Quote(to))
		}
		by[to] = from
	}
	return nil
}
