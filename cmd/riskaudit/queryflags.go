package main

import (
	"errors"
	"io/fs"
	"net/url"
	"os"
	"slices"
	"sort"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/pgcohort"
	"github.com/riskaudit/riskaudit/plan"
)

// queryFlags are the flags that read a cohort from a PostgreSQL query
// instead of a file: one connection (--db) and one set of parameters
// (--param) for every query of the command, and for each role (cohort,
// dev, data) an inline query and a query file.
type queryFlags struct {
	db     string
	params []string
	roles  map[string]*roleQuery
	// planParams are the plan's parameters, below those of --param.
	planParams map[string]string
	// used are the placeholders the queries made so far use.
	used []string
	// stderr hears the note on a password given in --db.
	stderr func(format string, args ...any)
}

// roleQuery is the query of one role: inline or from a file.
type roleQuery struct {
	inline, file string
	// fileFlag and fileFlag are the flags' names; pathFlag the flag of
	// the role's file input.
	flag, fileFlag, pathFlag string
}

// register adds --db, --param and, for each role, --ROLE-query and
// --ROLE-query-file; pathFlag maps each role to the flag of its file
// (cohort → --cohort).
func (f *queryFlags) register(fs *pflag.FlagSet, roles map[string]string) {
	fs.StringVar(&f.db, "db", "", "PostgreSQL connection for the query flags: a URL (postgresql://user@host:port/database) or key=value settings (default: the PG* environment variables and the password file, as psql)")
	fs.StringArrayVar(&f.params, "param", nil, "NAME=VALUE: the value of the placeholder @NAME in the queries, sent apart from the SQL (repeat for each)")
	f.roles = map[string]*roleQuery{}
	names := make([]string, 0, len(roles))
	for r := range roles {
		names = append(names, r)
	}
	sort.Strings(names)
	for _, role := range names {
		rq := &roleQuery{flag: role + "-query", fileFlag: role + "-query-file", pathFlag: roles[role]}
		what := map[string]string{"cohort": "the cohort", "dev": "the development data"}[role]
		if what == "" {
			what = "the " + role
		}
		fs.StringVar(&rq.inline, rq.flag, "", "read "+what+" from this SQL query (PostgreSQL, in a read-only transaction) instead of --"+rq.pathFlag)
		fs.StringVar(&rq.file, rq.fileFlag, "", "read "+what+" from the SQL query in this file")
		f.roles[role] = rq
	}
}

// given reports whether a query is given for role.
func (f *queryFlags) given(role string) bool {
	rq := f.roles[role]
	return rq != nil && (rq.inline != "" || rq.file != "")
}

// check refuses query flags that contradict each other or the file
// flags: paths maps each role to its file flag's value.
func (f *queryFlags) check(paths map[string]string) error {
	any := false
	for role, rq := range f.roles {
		if rq.inline != "" && rq.file != "" {
			return usagef("give --%s or --%s, not both", rq.flag, rq.fileFlag)
		}
		if f.given(role) && paths[role] != "" {
			return usagef("give --%s (a file) or a query (--%s, --%s), not both", rq.pathFlag, rq.flag, rq.fileFlag)
		}
		any = any || f.given(role)
	}
	if !any && (len(f.params) > 0 || f.db != "") {
		return usagef("--db and --param go with a query (%s)", f.queryFlagNames())
	}
	return nil
}

func (f *queryFlags) queryFlagNames() string {
	var names []string
	for _, rq := range f.roles {
		names = append(names, "--"+rq.flag, "--"+rq.fileFlag)
	}
	sort.Strings(names)
	return strings.Join(names, ", ")
}

// boundParams are the parameters of --param over those of the plan.
func (f *queryFlags) boundParams() ([]pgcohort.Param, error) {
	merged := map[string]string{}
	for k, v := range f.planParams {
		merged[k] = v
	}
	typed := map[string]bool{}
	for _, s := range f.params {
		p, err := pgcohort.ParseParam(s)
		if err != nil {
			return nil, usagef("--param %v", err)
		}
		if typed[p.Name] {
			return nil, usagef("--param %s is given twice", p.Name)
		}
		typed[p.Name] = true
		merged[p.Name] = p.Value
	}
	out := make([]pgcohort.Param, 0, len(merged))
	for k, v := range merged {
		out = append(out, pgcohort.Param{Name: k, Value: v})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out, nil
}

// input is role's query as an audit input (the zero Input when no query
// is given for it), and the query file, which no output may overwrite.
// A query file that cannot be read is bad input; every parameter must
// be used by one of the command's queries.
func (f *queryFlags) input(role string) (audit.Input, error) {
	if !f.given(role) {
		return audit.Input{}, nil
	}
	rq := f.roles[role]
	sql := rq.inline
	if rq.file != "" {
		b, err := os.ReadFile(rq.file)
		if err != nil {
			msg := err.Error()
			var pe *fs.PathError
			if errors.As(err, &pe) {
				msg = pe.Err.Error()
			}
			return audit.Input{}, &cohort.Error{File: rq.file, Msg: "cannot read the query file: " + msg, Kind: cohort.ErrRead, Err: err}
		}
		sql = string(b)
	}
	params, err := f.boundParams()
	if err != nil {
		return audit.Input{}, err
	}
	q, err := pgcohort.New(f.db, sql, rq.file, params)
	if err != nil {
		return audit.Input{}, err
	}
	f.used = append(f.used, q.Placeholders()...)
	if f.stderr != nil && hasPassword(f.db) {
		f.stderr("riskaudit: note: the password in --db can be seen by other users of this machine; keep it in the password file (PGPASSFILE or ~/.pgpass) or PGPASSWORD instead\n")
		f.stderr = nil
	}
	return audit.Input{Path: q.Name(), Source: q}, nil
}

// only is the input of a command that reads one dataset: role's query
// when one is given (every parameter then used by it), else the file
// path.
func (f *queryFlags) only(role, path string) (audit.Input, error) {
	if !f.given(role) {
		return audit.Input{Path: path}, nil
	}
	in, err := f.input(role)
	if err != nil {
		return audit.Input{}, err
	}
	return in, f.checkUsed()
}

// checkUsed refuses a parameter that no query of the command uses
// (call it after input for every role): a misspelt name would otherwise
// go unnoticed.
func (f *queryFlags) checkUsed() error {
	params, err := f.boundParams()
	if err != nil {
		return err
	}
	for _, p := range params {
		if !slices.Contains(f.used, p.Name) {
			uses := "they use no placeholder"
			if len(f.used) > 0 {
				uses = "they use @" + strings.Join(slices.Compact(slices.Sorted(slices.Values(f.used))), ", @")
			}
			return usagef("the parameter %s is used by no query (%s)", p.Name, uses)
		}
	}
	return nil
}

// queryFiles are the query files given, which no output may overwrite.
func (f *queryFlags) queryFiles() []string {
	var out []string
	for _, rq := range f.roles {
		if rq.file != "" {
			out = append(out, rq.file)
		}
	}
	return out
}

// hasPassword reports whether connection settings hold a password.
func hasPassword(conn string) bool {
	if u, err := url.Parse(conn); err == nil && (u.Scheme == "postgres" || u.Scheme == "postgresql") {
		_, set := u.User.Password()
		return set || u.Query().Get("password") != ""
	}
	return strings.Contains(conn, "password=") || strings.Contains(conn, "password =")
}

// applyQueryPlan takes the plan's database, queries and parameters where
// the command line gives none: a role's plan query applies unless the
// role's file flag or one of its query flags was typed, and the plan's
// file only when no query flag was typed.
func applyQueryPlan(cmd *cobra.Command, f *queryFlags, pl *plan.Plan, paths map[string]*string) error {
	changed := cmd.Flags().Changed
	if pl.Set["db"] && !changed("db") {
		f.db = pl.DB
	}
	f.planParams = pl.Params
	for role, rq := range f.roles {
		typed := changed(rq.pathFlag) || changed(rq.flag) || changed(rq.fileFlag)
		q, ok := pl.Queries[role]
		if typed {
			if changed(rq.flag) || changed(rq.fileFlag) {
				if p := paths[role]; p != nil && !changed(rq.pathFlag) {
					*p = "" // the plan's file gives way to a typed query
				}
			}
			continue
		}
		if ok {
			rq.inline, rq.file = q.SQL, q.File
			if p := paths[role]; p != nil {
				*p = ""
			}
		}
	}
	return nil
}
