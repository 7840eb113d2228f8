package plan

import (
	"path/filepath"
	"unicode"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/cohort"
)

// Query is a cohort's database query in a plan: the SQL inline
// (cohort_query) or the file that holds it (cohort_query_file, relative
// to the plan).
type Query struct {
	SQL, File string
	// Line is the plan line of the key.
	Line int
}

// query reads the keys of the database queries: db, the queries and
// their files, and params (a mapping of placeholder names to values).
func (p *parser) query(pl *Plan, key string, v *yaml.Node) error {
	if pl.Queries == nil {
		pl.Queries = map[string]Query{}
	}
	switch key {
	case "db":
		s, err := p.str(v, key)
		pl.DB = s
		return err
	case "params":
		if v.Kind != yaml.MappingNode {
			return p.errf(ErrValue, v, "params must map each placeholder name to its value, such as start: 2026-11-01")
		}
		pl.Params = map[string]string{}
		for i := 0; i+1 < len(v.Content); i += 2 {
			k, n := v.Content[i], v.Content[i+1]
			if !placeholderName(k.Value) {
				return p.errf(ErrValue, k, "params: %s is not a placeholder name (a letter or _ followed by letters, digits or _)", cohort.Quote(k.Value))
			}
			if _, ok := pl.Params[k.Value]; ok {
				return p.errf(ErrDuplicateKey, k, "params: %s appears twice", cohort.Quote(k.Value))
			}
			if n.Kind != yaml.ScalarNode || n.ShortTag() == "!!null" {
				return p.errf(ErrValue, n, "params: the value of %s must be a single value", cohort.Quote(k.Value))
			}
			pl.Params[k.Value] = n.Value
		}
		return nil
	}
	s, err := p.str(v, key)
	if err != nil {
		return err
	}
	if s == "" {
		return p.errf(ErrValue, v, "%s is empty", key)
	}
	role, file := "cohort", false
	switch key {
	case "dev_query":
		role = "dev"
	case "cohort_query_file":
		file = true
	case "dev_query_file":
		role, file = "dev", true
	}
	q := pl.Queries[role]
	if file {
		if q.File = s; !filepath.IsAbs(s) {
			q.File = filepath.Join(filepath.Dir(p.file), s)
		}
	} else {
		q.SQL = s
	}
	q.Line = v.Line
	pl.Queries[role] = q
	return nil
}

// checkQueries refuses a role given both as a file and as a query, and a
// query given both inline and as a file.
func (p *parser) checkQueries(pl *Plan, root *yaml.Node) error {
	for _, role := range []string{"cohort", "dev"} {
		q, ok := pl.Queries[role]
		if !ok {
			continue
		}
		if pl.Set[role+"_query"] && pl.Set[role+"_query_file"] {
			return p.errf(ErrConflict, lineNode(q.Line), "give %s_query or %s_query_file, not both", role, role)
		}
		if pl.Set[role] {
			return p.errf(ErrConflict, lineNode(q.Line), "give %s (a file) or a query (%s_query, %s_query_file), not both", role, role, role)
		}
	}
	return nil
}

func lineNode(line int) *yaml.Node { return &yaml.Node{Line: line} }

func placeholderName(s string) bool {
	for i, r := range s {
		if !(r == '_' || unicode.IsLetter(r) || i > 0 && r >= '0' && r <= '9') {
			return false
		}
	}
	return s != ""
}
