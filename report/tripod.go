package report

import (
	"strings"

	"github.com/riskaudit/riskaudit/validate"
)

// The appendix maps the report to the items of the TRIPOD+AI statement
// (Collins GS, Moons KGM, Dhiman P, et al. TRIPOD+AI statement: updated
// guidance for reporting clinical prediction models that use regression
// or machine learning methods. BMJ 2024;385:e078378) that apply to an
// evaluation of a model's performance (those marked E or D;E). Each item
// is described by its topic in our own words, not the statement's; the
// item numbers follow a transcription of the checklist, to be checked
// against the published one (DEVELOPERS.md).

// tripodItem is one checklist item: its number, its topic in brief, and
// what the audit a holds for it (in) and what the team must add
// (supply); either may be empty.
type tripodItem struct {
	id, topic string
	cover     func(a *validate.Audit) (in, supply string)
}

// fixed is an item's cover that does not depend on the audit.
func fixed(in, supply string) func(*validate.Audit) (string, string) {
	return func(*validate.Audit) (string, string) { return in, supply }
}

// purposeCover says which of the purpose fields keys are stated, and
// asks for the rest.
func purposeCover(a *validate.Audit, keys []string, also string) (string, string) {
	var have, missing []string
	for _, k := range keys {
		label := strings.ReplaceAll(k, "_", " ")
		if a.Model.Purpose != nil && a.Model.Purpose.Get(k) != "" {
			have = append(have, label)
		} else {
			missing = append(missing, label)
		}
	}
	in, supply := "", also
	if len(have) > 0 {
		in = "Stated purpose: " + strings.Join(have, ", ")
	}
	if len(missing) > 0 {
		m := "the " + andList(missing) + " (a `purpose` section of the spec or plan)"
		if supply == "" {
			supply = m
		} else {
			supply = m + "; " + supply
		}
	}
	return in, supply
}

var tripodItems = []tripodItem{
	{"1", "title: an evaluation of a prediction model, its population and outcome", func(a *validate.Audit) (string, string) {
		return purposeCover(a, []string{"target_population"}, "a title naming the study as an evaluation of the model, with the population and the outcome")
	}},
	{"2", "abstract", fixed("Summary (the measures in plain words)", "a structured abstract (the statement's checklist for abstracts)")},
	{"3a", "healthcare context, diagnostic or prognostic, rationale, existing models", func(a *validate.Audit) (string, string) {
		return purposeCover(a, []string{"intended_use"}, "the clinical context, why the model is evaluated, and other models for the same use")
	}},
	{"3b", "target population, intended use in the care pathway, intended users", func(a *validate.Audit) (string, string) {
		return purposeCover(a, []string{"target_population", "intended_use", "setting"}, "where in the care pathway the model is used, and by whom")
	}},
	{"3c", "known health inequalities between sociodemographic groups", fixed("", "what is known of inequalities between groups of patients")},
	{"4", "objectives: development, evaluation or both", func(a *validate.Audit) (string, string) {
		if a.CohortIsDevelopment {
			return "Header: the model's performance on its development data, with internal validation", "the study's objectives"
		}
		return "Header: an evaluation of the model on this cohort", "the study's objectives in your words"
	}},
	{"5a", "data sources, why they were used, how representative they are", fixed("Provenance: every file read, with its SHA-256", "the source of each dataset (registry, routine care, trial), why it was used and how representative it is")},
	{"5b", "dates of the data: start and end of accrual and of follow-up", fixed("Header and Provenance: the audit date", "the start and end of accrual and, where it applies, of follow-up")},
	{"6a", "study setting, number and location of centres", func(a *validate.Audit) (string, string) {
		return purposeCover(a, []string{"setting"}, "the number and location of centres")
	}},
	{"6b", "eligibility criteria", fixed("", "the eligibility criteria of the cohort")},
	{"6c", "treatments received and how they were handled", fixed("", "treatments received, where they matter, and how they were handled")},
	{"7", "data preparation and quality checks", fixed("Cohort (rows left out for missing values) and Provenance (column renames)", "how the extract was prepared and checked, and whether alike across groups of patients")},
	{"8a", "outcome: definition, time horizon, how and when assessed", func(a *validate.Audit) (string, string) {
		in, supply := purposeCover(a, []string{"outcome_definition", "prediction_horizon"}, "how and when the outcome was assessed, and whether alike across groups of patients")
		return joinCover("Header: the outcome column and the value counted as an event", in), supply
	}},
	{"8b", "qualifications of outcome assessors, where judgement is needed", fixed("", "who assessed the outcome, where that needs judgement")},
	{"8c", "blinding of outcome assessment", fixed("", "whether the outcome was assessed blind to the predictors")},
	{"9b", "predictors: definitions, how and when measured", fixed("Provenance: the model's spec file (its terms, coding and transforms)", "how and when each predictor was measured in this cohort")},
	{"9c", "qualifications of predictor assessors, where judgement is needed", fixed("", "who assessed the predictors, where that needs judgement")},
	{"10", "sample size: how it was arrived at, why it is enough", fixed("Was the cohort large enough? (Riley et al. 2021)", "how the cohort's size was arrived at")},
	{"11", "missing data: how handled, reasons", fixed("Cohort: rows left out per column; Methods: complete-case analysis", "why the values are missing, and whether the complete cases can stand for the cohort")},
	{"12d", "heterogeneity across clusters (such as hospitals)", func(a *validate.Audit) (string, string) {
		if a.Clusters != nil {
			return "Across " + code(a.Clusters.Column) + ": random-effects meta-analysis of the measures across clusters (τ², I², prediction intervals)", ""
		}
		if len(a.Subgroups) > 0 {
			return "Subgroups (when a subgroup column is a centre)", "how heterogeneity between centres was examined"
		}
		return "", "whether performance differs between centres (audit with --subgroups on a centre column)"
	}},
	{"12e", "measures and plots of performance, and their rationale", fixed("Methods, and the figures of each section", "")},
	{"12f", "model updating arising from the evaluation", func(a *validate.Audit) (string, string) {
		if a.Update != nil {
			return "Model updating (closed testing, Vergouwe et al. 2017)", ""
		}
		return "", "any updating of the model (none was done in this audit)"
	}},
	{"12g", "how the predictions were calculated", func(a *validate.Audit) (string, string) {
		if a.Model.Source == "predicted risks" {
			return "Header: the column of predicted risks", "how the risks in that column were computed (software, version, model)"
		}
		return "Provenance: the frozen model's file and SHA-256; riskaudit computed the risks", ""
	}},
	{"13", "class imbalance methods", fixed("the audit uses none", "whether the model's development used any, and how the model was then recalibrated")},
	{"14", "fairness: approaches and rationale", func(a *validate.Audit) (string, string) {
		if len(a.Subgroups) > 0 {
			return "Subgroups: performance by group", "the approach to fairness and its rationale"
		}
		return "", "the approach to fairness and its rationale (audit with --subgroups for performance by group)"
	}},
	{"16", "differences between development and evaluation data", func(a *validate.Audit) (string, string) {
		if a.CaseMix != nil {
			return "Case-mix: development data against this cohort", "differences in setting, eligibility and the definitions of outcome and predictors"
		}
		return "", "differences in setting, eligibility, outcome and predictors (audit with --dev for the case-mix comparison)"
	}},
	{"17", "ethical approval and consent", fixed("", "the approving body and the consent or its waiver")},
	{"18a", "funding", fixed("", "the funding and the funders' role")},
	{"18b", "conflicts of interest", fixed("", "conflicts of interest")},
	{"18c", "protocol", fixed("", "where the protocol is, or that there is none")},
	{"18d", "registration", fixed("", "the registration, or that there is none")},
	{"18e", "data sharing", fixed("", "whether and how the data are available")},
	{"18f", "code sharing", fixed("Provenance: the tool, its version and the command line", "where the analysis (this command line, any plan) is kept")},
	{"19", "patient and public involvement", fixed("", "any patient and public involvement, or that there was none")},
	{"20a", "flow of participants, with and without the outcome", fixed("Cohort: rows read, left out and used; events", "the flow before the extract (a diagram helps) and the follow-up time")},
	{"20b", "characteristics of the participants", func(a *validate.Audit) (string, string) {
		if a.CaseMix != nil {
			return "Case-mix: each predictor's distribution; Cohort: events and missing values", "key dates, demographics beyond the predictors, treatments and follow-up"
		}
		return "Cohort: events and missing values", "the participants' characteristics (audit with --dev for each predictor's distribution)"
	}},
	{"20c", "evaluation data against development data: predictors and outcome", func(a *validate.Audit) (string, string) {
		if a.CaseMix != nil {
			return "Case-mix: standardised differences and the membership model", ""
		}
		return "", "a comparison with the development data (audit with --dev)"
	}},
	{"21", "participants and events in each analysis", fixed("Cohort; Development data compared and Internal validation, when run", "")},
	{"23a", "performance with confidence intervals, including key subgroups", func(a *validate.Audit) (string, string) {
		in := "Discrimination, Calibration, Overall accuracy, Clinical usefulness"
		if len(a.Subgroups) > 0 {
			return in + ", Subgroups", ""
		}
		return in, "performance in key subgroups of patients (audit with --subgroups)"
	}},
	{"23b", "heterogeneity of performance across clusters", func(a *validate.Audit) (string, string) {
		if a.Clusters != nil {
			return "Across " + code(a.Clusters.Column) + ": each cluster's measures, the pooled measures with their prediction intervals, and the forest plots", ""
		}
		if len(a.Subgroups) > 0 {
			return "Subgroups (when a subgroup column is a centre)", ""
		}
		return "", "if examined, performance by centre"
	}},
	{"24", "results of model updating", func(a *validate.Audit) (string, string) {
		if a.Update != nil {
			return "Model updating: the updated model and its expected performance", "the updated model's own validation"
		}
		return "", "any updating (none was done in this audit)"
	}},
	{"25", "overall interpretation, including fairness", fixed("Summary: what each measure means", "the overall interpretation beside the objectives and previous studies")},
	{"26", "limitations and their effect on bias, uncertainty and generalisability", fixed("Was the cohort large enough?; Cohort: missing values", "the study's limitations")},
	{"27c", "next steps for research, applicability and generalisability", fixed("", "the next steps")},
}

// tripod writes the appendix.
func (r *renderer) tripod() {
	r.p("\n## Appendix: reporting checklist (TRIPOD+AI)\n\n")
	r.p("The items of the TRIPOD+AI statement (Collins et al., BMJ 2024) that apply to the evaluation of a model's performance, each described in brief in our words (the statement's own wording and explanation govern), with the section of this report that gives what riskaudit can know, and what the team must still supply from knowledge of the study.\n\n")
	t := table{head: []string{"item", "topic", "in this report", "still to supply"}}
	var covered, partly, team []string
	for _, it := range tripodItems {
		in, supply := it.cover(r.a)
		switch {
		case supply == "":
			covered = append(covered, it.id)
		case in == "":
			team = append(team, it.id)
		default:
			partly = append(partly, it.id)
		}
		if in == "" {
			in = "—"
		}
		if supply == "" {
			supply = "—"
		}
		t.add(it.id, it.topic, in, supply)
	}
	t.write(r.w)
	list := func(ids []string) string {
		if len(ids) == 0 {
			return "none"
		}
		return strings.Join(ids, ", ")
	}
	r.p("Covered by this report: %s. Begun here, for the team to complete: %s. For the team alone: %s.\n\n", list(covered), list(partly), list(team))
	r.p("The items for developing a model (9a, 12a–12c, 15, 22, 27a, 27b) belong to the report of the model's development")
	if d := r.a.Development; d != nil && d.Fit != nil {
		r.p("; this audit fitted the recipe, and the section Model fit on the development data gives the fitted model")
		if r.a.Internal != nil {
			r.p(" and Internal validation its internal validation")
		}
	}
	r.p(".\n")
}

// joinCover joins two parts of what the report holds for an item.
func joinCover(a, b string) string {
	switch {
	case a == "":
		return b
	case b == "":
		return a
	}
	return a + "; " + b
}
