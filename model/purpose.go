package model

// Purpose is a model's stated purpose: what it predicts, for whom,
// where and over what time. Every field is optional free text. A frozen
// model written by riskaudit keeps its recipe's purpose (fit, the fit
// inside an audit, shrinkage and updating alike), and an audit plan may
// state a purpose of its own for the audit (package plan). The fields
// are those a report of a prediction model's evaluation is asked to
// state (the TRIPOD+AI statement, Collins et al., BMJ 2024: the target
// population and intended use, the setting, the outcome and its time
// horizon).
type Purpose struct {
	// IntendedUse is the decision or task the model supports, and its
	// intended users.
	IntendedUse string
	// TargetPopulation is the patients the model is meant for.
	TargetPopulation string
	// Setting is the care setting (such as secondary care, pre-operative
	// assessment) and, when it matters, its centres.
	Setting string
	// OutcomeDefinition is how the outcome is defined and ascertained.
	OutcomeDefinition string
	// PredictionHorizon is the time over which the risk is predicted
	// (such as 30 days after surgery).
	PredictionHorizon string
}

// PurposeKeys are the YAML keys of a purpose section, in the order the
// report and the spec write them.
var PurposeKeys = []string{"intended_use", "target_population", "setting", "outcome_definition", "prediction_horizon"}

// PurposeLabels are the keys' names in words, by key.
var PurposeLabels = map[string]string{
	"intended_use":       "intended use",
	"target_population":  "target population",
	"setting":            "setting",
	"outcome_definition": "outcome definition",
	"prediction_horizon": "prediction horizon",
}

// field returns the field of key (nil for an unknown key).
func (p *Purpose) field(key string) *string {
	switch key {
	case "intended_use":
		return &p.IntendedUse
	case "target_population":
		return &p.TargetPopulation
	case "setting":
		return &p.Setting
	case "outcome_definition":
		return &p.OutcomeDefinition
	case "prediction_horizon":
		return &p.PredictionHorizon
	}
	return nil
}

// Get returns the field of key, one of PurposeKeys ("" for any other).
func (p Purpose) Get(key string) string {
	if f := p.field(key); f != nil {
		return *f
	}
	return ""
}

// Set sets the field of key, one of PurposeKeys; it reports false for
// any other key.
func (p *Purpose) Set(key, value string) bool {
	f := p.field(key)
	if f != nil {
		*f = value
	}
	return f != nil
}

// IsZero reports whether no field is stated.
func (p Purpose) IsZero() bool { return p == Purpose{} }
