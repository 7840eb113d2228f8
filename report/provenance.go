package report

import (
	"fmt"
	"strings"

	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// DateSource says in words where an audit date came from.
func DateSource(source string) string {
	switch source {
	case validate.DateFromFlag:
		return "given by --audit-date"
	case validate.DateFromPlan:
		return "from the audit plan"
	case validate.DateToday:
		return "the day the audit was run"
	case validate.DateFromConfig:
		return "set by the program that ran the audit"
	}
	return "of unknown origin"
}

// auditDateLine is the sentence that gives the audit date and its
// source.
func auditDateLine(pv validate.Provenance) string {
	return fmt.Sprintf("Audit date %s (%s).", pv.AuditDate, DateSource(pv.AuditDateSource))
}

// purpose writes the model's stated purpose, field by field with where
// each came from, and a note naming the fields nobody stated.
func (r *renderer) purpose() {
	pu := r.a.Model.Purpose
	if pu == nil {
		return
	}
	r.p("## Stated purpose\n\n")
	if len(pu.Missing) == len(model.PurposeKeys) {
		r.p("**Note: neither the model's spec nor the audit plan states the model's purpose** (%s). Without it a board cannot judge whether this cohort is one the model was meant for: state it in the spec's or the plan's `purpose` section.\n\n",
			andList(purposeLabels(pu.Missing)))
		return
	}
	t := table{head: []string{"", "as stated", "stated in"}}
	for _, k := range model.PurposeKeys {
		label := model.PurposeLabels[k]
		switch pu.From[k] {
		case "model":
			t.add(label, Escape(pu.Get(k)), "the model's spec")
		case "plan":
			from := "the audit plan"
			if old, ok := pu.ReplacedFromModel[k]; ok {
				from += " (in place of the spec's: " + Escape(old) + ")"
			}
			t.add(label, Escape(pu.Get(k)), from)
		default:
			t.add(label, "**not stated**", "")
		}
	}
	t.write(r.w)
	if len(pu.Missing) > 0 {
		r.p("Note: the %s %s not stated in the model's spec or the audit plan; a board needs %s to judge whether this cohort is one the model was meant for.\n\n",
			andList(purposeLabels(pu.Missing)), plural(len(pu.Missing), "is", "are"), plural(len(pu.Missing), "it", "them"))
	}
}

// andList joins words as "a, b and c".
func andList(words []string) string {
	if len(words) <= 1 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " and " + words[len(words)-1]
}

func purposeLabels(keys []string) []string {
	var out []string
	for _, k := range keys {
		out = append(out, model.PurposeLabels[k])
	}
	return out
}

// provenance writes what the audit was run on and how: every input with
// its SHA-256 (the plan among them), the model fitted inside the audit,
// the column renames, the date, the tool and the command line.
func (r *renderer) provenance() {
	pv := r.a.Provenance
	r.p("## Provenance\n\n")
	t := table{head: []string{"input", "file", "SHA-256"}}
	for _, in := range pv.Inputs {
		t.add(in.Role, code(in.FileText()), code(in.SHA256))
	}
	if pl := pv.Plan; pl != nil {
		name := code(pl.Path)
		if pl.Name != "" {
			name += " (" + Escape(pl.Name) + ")"
		}
		t.add("audit plan", name, code(pl.SHA256))
	}
	t.write(r.w)
	writeQueries(r.w, pv.Inputs)
	if fm := r.a.Model.FittedModel; fm != nil {
		r.p("The model audited is the frozen model this audit fitted from the recipe %s, written beside this report as %s (SHA-256 %s).\n\n",
			code(r.a.Model.Spec), code(fm.Path), code(fm.SHA256))
	}
	writeRenames(r.w, pv.Renames)
	r.p("%s Tool: %s. Started: %s. Command line:\n\n", auditDateLine(pv), Escape(pv.Tool), pv.StartedAt)
	writeCommandLine(r.w, pv.CommandLine)
}

// writeRenames writes the column renames asked for, or that there were
// none.
func writeRenames(w *errWriter, renames []validate.Rename) {
	if len(renames) == 0 {
		fmt.Fprint(w, "Column renames: none.\n\n")
		return
	}
	fmt.Fprint(w, "Column renames (a column of the file read under the name the model uses):\n\n")
	t := table{head: []string{"column in the file", "read as", "given by", "applied to"}}
	for _, rn := range renames {
		by := map[string]string{"flag": "--rename", "plan": "the audit plan", "config": "the program's configuration"}[rn.Source]
		applied := strings.Join(rn.AppliedTo, ", ")
		if applied == "" {
			applied = "no file had this column"
		}
		t.add(code(rn.From), code(rn.To), by, applied)
	}
	t.write(w)
}

// writeCommandLine writes the command line in a fence longer than any
// run of backticks inside it.
func writeCommandLine(w *errWriter, cl string) {
	fence := "```"
	for strings.Contains(cl, fence) {
		fence += "`"
	}
	fmt.Fprintf(w, "%s\n%s\n%s\n\n", fence, cl, fence)
}

// writeQueries describes each input read by a database query: where, as
// whom, the SQL and its parameters, and the rows' SHA-256 with how to
// check it.
func writeQueries(w *errWriter, inputs []validate.InputFile) {
	p := func(format string, args ...any) { fmt.Fprintf(w, format, args...) }
	for _, in := range inputs {
		q := in.Query
		if q == nil {
			continue
		}
		p("The %s was read from a database: %s %s, database %s, as user %s, in a read-only transaction; %d rows, SHA-256 %s of %s.",
			Escape(in.Role), Escape(q.System), code(q.ServerVersion), code(q.Database), code(q.User), q.Rows, code(q.RowsSHA256), Escape(q.Serialisation))
		p(" Server %s.", code(q.Server))
		if len(q.Parameters) > 0 {
			var ps []string
			for _, p := range q.Parameters {
				ps = append(ps, code("@"+p.Name)+" = "+code(p.Value))
			}
			p(" Parameters (bound, not part of the SQL): %s.", strings.Join(ps, ", "))
		}
		from := "as given"
		if q.File != "" {
			from = "from " + code(q.File)
		}
		fence := "```"
		for strings.Contains(q.SQL, fence) {
			fence += "`"
		}
		p(" The query, %s:\n\n%ssql\n%s\n%s\n\n", from, fence, strings.TrimRight(q.SQL, "\n"), fence)
	}
}
