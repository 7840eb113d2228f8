// Package history keeps the summaries of successive audits in an SQLite
// file (through the pure-Go driver modernc.org/sqlite), so that trends
// and control limits can be drawn across audits.
//
// Every append is one transaction taken with an immediate write lock and
// a busy timeout, in write-ahead-log mode: two audits appending at once
// wait for each other, and a writer killed mid-append leaves the file as
// it was before that append.
//
// Errors wrap the database's error with %w and name the store. The
// problems the package finds itself have sentinels for errors.Is:
// ErrNotStore (a file that is not a riskaudit history store, which is
// never written to), ErrDuplicate (a second record of the same audit),
// ErrNoAudits (a store without records) and ErrIntegrity (a store that
// fails SQLite's integrity check). Their texts are part of the messages
// ("history h.sqlite: no audits recorded").
package history

import (
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"time"

	_ "modernc.org/sqlite" // registers the "sqlite" driver
)

// The problems with a store that the package finds itself; other errors
// wrap the database's.
var (
	// ErrNoAudits is a store that holds no audit.
	ErrNoAudits = errors.New("no audits recorded")
	// ErrIntegrity is a store that fails SQLite's integrity check; the
	// message goes on with what the check found.
	ErrIntegrity = errors.New("integrity check")
	// ErrNotStore is a file that exists and is not a riskaudit history
	// store (empty, not SQLite, or an SQLite database of other tables);
	// it is left untouched.
	ErrNotStore = errors.New("not a riskaudit history store")
	// ErrDuplicate is a record of an audit the store already holds: the
	// same model (name and SHA-256), cohort (SHA-256) and audit date.
	ErrDuplicate = errors.New("already recorded")
)

// sqliteMagic opens every SQLite database file.
const sqliteMagic = "SQLite format 3\x00"

// checkFile refuses a path that exists and cannot be a store, before
// SQLite opens it (which would write a header into an empty file). It
// reports whether the file exists.
func checkFile(path string) (bool, error) {
	st, err := os.Stat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return false, nil
	}
	if err != nil {
		return false, fmt.Errorf("history %s: %w", path, err)
	}
	if !st.Mode().IsRegular() {
		return true, fmt.Errorf("%s: %w (it is not a regular file)", path, ErrNotStore)
	}
	f, err := os.Open(path)
	if err != nil {
		return true, fmt.Errorf("history %s: %w", path, err)
	}
	defer f.Close()
	head := make([]byte, len(sqliteMagic))
	if n, _ := io.ReadFull(f, head); n < len(head) || string(head) != sqliteMagic {
		what := "it is not an SQLite database"
		if st.Size() == 0 {
			what = "it is empty"
		}
		return true, fmt.Errorf("%s: %w (%s)", path, ErrNotStore, what)
	}
	return true, nil
}

// CheckStore refuses a path that exists and is not a riskaudit history
// store (kind ErrNotStore), without writing to it; a path that does not
// exist is fine (a store is made there on the first append).
func CheckStore(path string) error {
	exists, err := checkFile(path)
	if err != nil || !exists {
		return err
	}
	db, err := connect(path, true)
	if err != nil {
		return err
	}
	return db.Close()
}

// checkTables refuses an SQLite database that holds tables but not the
// store's.
func checkTables(db *sql.DB, path string) error {
	var tables, ours int
	err := db.QueryRow(`SELECT COUNT(*), COALESCE(SUM(name = 'audits'), 0) FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'`).Scan(&tables, &ours)
	if err != nil {
		return fmt.Errorf("%s: %w (%v)", path, ErrNotStore, err)
	}
	if tables > 0 && ours == 0 {
		return fmt.Errorf("%s: %w (an SQLite database of other tables)", path, ErrNotStore)
	}
	return nil
}

// Record is the summary of one audit.
type Record struct {
	ID         int64
	AuditDate  string // the date the cohort describes, YYYY-MM-DD
	RecordedAt string // when the audit ran, UTC
	Model      string
	ModelSHA   string
	Cohort     string
	CohortSHA  string
	Rows       int
	Used       int
	Events     int
	Expected   float64
	AUC        [3]float64 // value, lower, upper
	OE         [3]float64
	Slope      [3]float64
	CITL       [3]float64
	ICI        float64
	Brier      float64
	Verdict    string
	// JSON is the whole audit.json.
	JSON string
	// Token, when set, names the output the record was written with, so
	// that a run stopped between writing its audit folder and committing
	// the record can be recognised (HasToken).
	Token string
	// ParentSHA is the SHA-256 of the model that the audited model
	// updates, from its provenance (empty when it updates none, and in
	// records made before stores kept it).
	ParentSHA string
	// Criteria are the acceptance criteria the audit was judged by. Read
	// takes them from the record's own column or, in records made before
	// stores kept it, from the verdict in the record's audit.json; nil
	// when neither gives them.
	Criteria []Criterion
	// Alarms are the alarm state of the audit's charts in date order, as
	// its audit.json (kept whole in the store) gives them under
	// over_time; nil for an audit that charted nothing in date order.
	Alarms *Alarms
}

// Alarms is the alarm state of an audit's charts in date order: the
// signals of the two one-sided risk-adjusted CUSUMs (each restarted
// after a signal) and the EWMA's first crossings of its limits.
type Alarms struct {
	// DateColumn is the column the cohort was put in date order by.
	DateColumn string `json:"date_column"`
	// CUSUM are the charts by name ("deterioration", "improvement").
	CUSUM []ChartAlarm `json:"cusum"`
	// EWMAAbove and EWMABelow are the EWMA's first crossings of its upper
	// and lower limits (Patient 0: none).
	EWMAAbove FirstAlarm `json:"ewma_above"`
	EWMABelow FirstAlarm `json:"ewma_below"`
}

// ChartAlarm is one CUSUM's signals and the first of them.
type ChartAlarm struct {
	Name    string     `json:"name"`
	Signals int        `json:"signals"`
	First   FirstAlarm `json:"first_signal"`
}

// FirstAlarm is a chart's first signal: the patient's 1-based position in
// date order and the date, Patient 0 for none.
type FirstAlarm struct {
	Patient int    `json:"patient"`
	Date    string `json:"date,omitempty"`
}

// Any reports whether any chart signalled.
func (a *Alarms) Any() bool {
	if a == nil {
		return false
	}
	for _, c := range a.CUSUM {
		if c.Signals > 0 {
			return true
		}
	}
	return a.EWMAAbove.Patient > 0 || a.EWMABelow.Patient > 0
}

// alarmsOf reads the alarm state from the over_time object of a
// record's audit.json (nil when it has none or it cannot be read).
func alarmsOf(overTime string) *Alarms {
	if overTime == "" {
		return nil
	}
	var ot struct {
		DateColumn string       `json:"date_column"`
		CUSUM      []ChartAlarm `json:"cusum"`
		EWMA       struct {
			Above FirstAlarm `json:"first_above"`
			Below FirstAlarm `json:"first_below"`
		} `json:"ewma"`
	}
	if json.Unmarshal([]byte(overTime), &ot) != nil || ot.DateColumn == "" {
		return nil
	}
	return &Alarms{DateColumn: ot.DateColumn, CUSUM: ot.CUSUM, EWMAAbove: ot.EWMA.Above, EWMABelow: ot.EWMA.Below}
}

// Criterion is one acceptance criterion an audit was judged by: a bound
// on a measure, named as in plans (auc, oe_ci.lower, slope, oe_ci, …).
// Exactly one of AtLeast, AtMost, Between and Contains is set.
type Criterion struct {
	Measure  string      `json:"measure"`
	AtLeast  *float64    `json:"at_least,omitempty"`
	AtMost   *float64    `json:"at_most,omitempty"`
	Between  *[2]float64 `json:"between,omitempty"`
	Contains *float64    `json:"contains,omitempty"`
	// Severity is "fail" or "review".
	Severity string `json:"severity"`
}

// Bound writes the criterion's bound as audit.json's verdict does
// ("≥ 0.7", "≤ 0.03", "between 0.8 and 1.2", "interval contains 1").
func (c Criterion) Bound() string {
	switch {
	case c.AtLeast != nil:
		return fmt.Sprintf("≥ %g", *c.AtLeast)
	case c.AtMost != nil:
		return fmt.Sprintf("≤ %g", *c.AtMost)
	case c.Between != nil:
		return fmt.Sprintf("between %g and %g", c.Between[0], c.Between[1])
	case c.Contains != nil:
		return fmt.Sprintf("interval contains %g", *c.Contains)
	}
	return "?"
}

// parseBound reads a bound as Bound writes it (and as audit.json's
// verdict has always written it), exactly: a text that Bound would not
// write back the same is refused.
func parseBound(measure, bound, severity string) (Criterion, bool) {
	c := Criterion{Measure: measure, Severity: severity}
	var a, b float64
	switch {
	case strings.HasPrefix(bound, "≥ "):
		if _, err := fmt.Sscanf(bound, "≥ %g", &a); err != nil {
			return c, false
		}
		c.AtLeast = &a
	case strings.HasPrefix(bound, "≤ "):
		if _, err := fmt.Sscanf(bound, "≤ %g", &a); err != nil {
			return c, false
		}
		c.AtMost = &a
	case strings.HasPrefix(bound, "between "):
		if _, err := fmt.Sscanf(bound, "between %g and %g", &a, &b); err != nil {
			return c, false
		}
		c.Between = &[2]float64{a, b}
	case strings.HasPrefix(bound, "interval contains "):
		if _, err := fmt.Sscanf(bound, "interval contains %g", &a); err != nil {
			return c, false
		}
		c.Contains = &a
	default:
		return c, false
	}
	return c, c.Bound() == bound
}

// criteriaOf reads the criteria column (a JSON array of Criterion), or,
// when it is empty, the verdict's criteria in the record's audit.json
// (verdict, an array of {measure, bound, severity}). Criteria that
// cannot be read are left out; nil means none could be.
func criteriaOf(column, verdict string) []Criterion {
	if column != "" {
		var cs []Criterion
		if json.Unmarshal([]byte(column), &cs) == nil {
			return cs
		}
		return nil
	}
	var vs []struct{ Measure, Bound, Severity string }
	if verdict == "" || json.Unmarshal([]byte(verdict), &vs) != nil {
		return nil
	}
	var cs []Criterion
	for _, v := range vs {
		if c, ok := parseBound(v.Measure, v.Bound, v.Severity); ok {
			cs = append(cs, c)
		}
	}
	return cs
}

const schema = `CREATE TABLE IF NOT EXISTS audits (
	id INTEGER PRIMARY KEY AUTOINCREMENT,
	audit_date TEXT NOT NULL,
	recorded_at TEXT NOT NULL,
	model TEXT NOT NULL, model_sha256 TEXT NOT NULL,
	cohort TEXT NOT NULL, cohort_sha256 TEXT NOT NULL,
	rows_read INTEGER NOT NULL, rows_used INTEGER NOT NULL, events INTEGER NOT NULL, expected REAL NOT NULL,
	auc REAL, auc_lower REAL, auc_upper REAL,
	oe REAL, oe_lower REAL, oe_upper REAL,
	slope REAL, slope_lower REAL, slope_upper REAL,
	citl REAL, citl_lower REAL, citl_upper REAL,
	ici REAL, brier REAL,
	verdict TEXT NOT NULL,
	audit_json TEXT NOT NULL
)`

// open opens the store with a busy timeout, write-ahead logging and
// immediate write transactions.
func open(path string) (*sql.DB, error) {
	return openStore(path, true)
}

// openStore opens the store at path after checking that an existing
// file is one; without create, a store that does not exist is an error.
func openStore(path string, create bool) (*sql.DB, error) {
	exists, err := checkFile(path)
	if err != nil {
		return nil, err
	}
	if !exists && !create {
		return nil, fmt.Errorf("history %s: %w", path, fs.ErrNotExist)
	}
	if !exists {
		if err := initStore(path); err != nil {
			return nil, err
		}
	}
	return connect(path, true)
}

// initStore creates an empty store at path, whole: it is made under a
// temporary name beside path and linked into place only when complete,
// so that no one ever sees a half-made store (an empty file would be
// refused as not a store). A store another writer created meanwhile
// wins.
func initStore(path string) error {
	tmp := filepath.Join(filepath.Dir(path), fmt.Sprintf(".%s.riskaudit-tmp-%d-%d", filepath.Base(path), os.Getpid(), time.Now().UnixNano()))
	defer os.Remove(tmp)
	db, err := connect(tmp, false)
	if err != nil {
		return err
	}
	_, err = db.Exec(schema)
	if cerr := db.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("history %s: creating the store: %w", path, err)
	}
	if err := os.Link(tmp, path); err != nil && !errors.Is(err, fs.ErrExist) {
		return fmt.Errorf("history %s: creating the store: %w", path, err)
	}
	return nil
}

// connect opens the SQLite file at path (with checks of its tables when
// check is set).
func connect(path string, check bool) (*sql.DB, error) {
	q := url.Values{}
	q.Add("_pragma", "busy_timeout(30000)")
	q.Add("_pragma", "journal_mode(WAL)")
	q.Add("_pragma", "synchronous(FULL)")
	q.Add("_txlock", "immediate")
	db, err := sql.Open("sqlite", "file:"+uriPath(path)+"?"+q.Encode())
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	db.SetMaxOpenConns(1)
	if check {
		if err := checkTables(db, path); err != nil {
			db.Close()
			return nil, err
		}
	}
	return db, nil
}

// uriPath escapes the characters an SQLite URI filename gives a meaning
// (%, ?, #), so that any path names its own file.
func uriPath(path string) string {
	return strings.NewReplacer("%", "%25", "?", "%3f", "#", "%23").Replace(path)
}

// Append adds a record to the store at path, creating it if needed, in
// one transaction.
func Append(path string, r Record) error {
	db, err := open(path)
	if err != nil {
		return err
	}
	defer db.Close()
	return appendTx(db, r, nil)
}

// DuplicateError is a record of an audit the store already holds (kind
// ErrDuplicate): the same model, cohort and audit date.
type DuplicateError struct {
	ID                       int64
	RecordedAt               string
	Model, Cohort, AuditDate string
}

// Error names the earlier record.
func (e *DuplicateError) Error() string {
	return fmt.Sprintf("the store already holds the audit of %s on %s for %s (record %d, recorded %s)", e.Model, e.Cohort, e.AuditDate, e.ID, e.RecordedAt)
}

// Is reports whether target is ErrDuplicate.
func (e *DuplicateError) Is(target error) bool { return target == ErrDuplicate }

// Pending is a record inserted in an open transaction, holding the
// store's write lock until Commit or Rollback, so that a caller can put
// other outputs in place between the insert and the commit.
type Pending struct {
	db *sql.DB
	tx *sql.Tx
	// ID is the number the record gets once committed.
	ID int64
}

// Begin inserts r into the store at path (created if needed) in a
// transaction left open. A record of the same audit (model, cohort and
// date) already in the store is an error of kind ErrDuplicate, unless
// replace is set: then it is removed in the same transaction.
func Begin(path string, r Record, replace bool) (*Pending, error) {
	db, err := open(path)
	if err != nil {
		return nil, err
	}
	tx, id, err := insert(db, r, replace)
	if err != nil {
		db.Close()
		return nil, err
	}
	return &Pending{db: db, tx: tx, ID: id}, nil
}

// Commit commits the record.
func (p *Pending) Commit() error {
	defer p.db.Close()
	if err := p.tx.Commit(); err != nil {
		return fmt.Errorf("history: committing: %w", err)
	}
	return nil
}

// Rollback abandons the record.
func (p *Pending) Rollback() {
	p.tx.Rollback()
	p.db.Close()
}

// HasToken reports whether the store at path holds a record with the
// token.
func HasToken(path, token string) (bool, error) {
	db, err := open(path)
	if err != nil {
		return false, err
	}
	defer db.Close()
	if err := migrate(db); err != nil {
		return false, err
	}
	var n int
	if err := db.QueryRow(`SELECT COUNT(*) FROM audits WHERE token = ?`, token).Scan(&n); err != nil {
		return false, fmt.Errorf("history %s: %w", path, err)
	}
	return n > 0, nil
}

// added are the columns added to the table after its first version, in
// the order they were added; migrate adds those a store lacks.
var added = []struct{ name, def string }{
	{"token", "TEXT NOT NULL DEFAULT ''"},
	{"model_parent_sha256", "TEXT NOT NULL DEFAULT ''"},
	{"criteria", "TEXT NOT NULL DEFAULT ''"},
}

// columns lists the columns of the store's table.
func columns(db interface {
	Query(string, ...any) (*sql.Rows, error)
}) (map[string]bool, error) {
	rows, err := db.Query(`SELECT name FROM pragma_table_info('audits')`)
	if err != nil {
		return nil, fmt.Errorf("history: %w", err)
	}
	defer rows.Close()
	have := map[string]bool{}
	for rows.Next() {
		var name string
		if err := rows.Scan(&name); err != nil {
			return nil, fmt.Errorf("history: %w", err)
		}
		have[name] = true
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("history: %w", err)
	}
	return have, nil
}

// migrate creates the table, and adds to a store made by an earlier
// version the columns it lacks (their defaults mark what such records
// do not know: no token, no parent model, no criteria).
func migrate(db interface {
	Exec(string, ...any) (sql.Result, error)
	Query(string, ...any) (*sql.Rows, error)
}) error {
	if _, err := db.Exec(schema); err != nil {
		return fmt.Errorf("history: creating the table: %w", err)
	}
	have, err := columns(db)
	if err != nil {
		return err
	}
	for _, c := range added {
		if have[c.name] {
			continue
		}
		if _, err := db.Exec(`ALTER TABLE audits ADD COLUMN ` + c.name + ` ` + c.def); err != nil {
			return fmt.Errorf("history: adding the %s column: %w", c.name, err)
		}
	}
	return nil
}

// appendTx appends in one transaction; beforeCommit (for tests) runs
// after the insert and before the commit.
func appendTx(db *sql.DB, r Record, beforeCommit func()) error {
	tx, _, err := insert(db, r, false)
	if err != nil {
		return err
	}
	defer tx.Rollback()
	if beforeCommit != nil {
		beforeCommit()
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("history: committing: %w", err)
	}
	return nil
}

// insert begins a transaction (taking the write lock), creates or
// migrates the table, refuses (or, with replace, removes) a record of
// the same audit, and inserts r; the caller commits or rolls back. It
// returns the new record's ID.
func insert(db *sql.DB, r Record, replace bool) (*sql.Tx, int64, error) {
	tx, err := db.Begin()
	if err != nil {
		return nil, 0, fmt.Errorf("history: %w", err)
	}
	if err := migrate(tx); err != nil {
		tx.Rollback()
		return nil, 0, err
	}
	same := `FROM audits WHERE model = ? AND model_sha256 = ? AND cohort_sha256 = ? AND audit_date = ?`
	args := []any{r.Model, r.ModelSHA, r.CohortSHA, r.AuditDate}
	var id int64
	var at string
	switch err := tx.QueryRow(`SELECT id, recorded_at `+same+` ORDER BY id LIMIT 1`, args...).Scan(&id, &at); {
	case err == nil && !replace:
		tx.Rollback()
		return nil, 0, &DuplicateError{ID: id, RecordedAt: at, Model: r.Model, Cohort: r.Cohort, AuditDate: r.AuditDate}
	case err == nil:
		if _, err := tx.Exec(`DELETE `+same, args...); err != nil {
			tx.Rollback()
			return nil, 0, fmt.Errorf("history: replacing record %d: %w", id, err)
		}
	case !errors.Is(err, sql.ErrNoRows):
		tx.Rollback()
		return nil, 0, fmt.Errorf("history: %w", err)
	}
	if r.RecordedAt == "" {
		r.RecordedAt = time.Now().UTC().Format(time.RFC3339)
	}
	criteria := ""
	if r.Criteria != nil {
		b, err := json.Marshal(r.Criteria)
		if err != nil {
			tx.Rollback()
			return nil, 0, fmt.Errorf("history: the record's criteria: %w", err)
		}
		criteria = string(b)
	}
	res, err := tx.Exec(`INSERT INTO audits (audit_date, recorded_at, model, model_sha256, cohort, cohort_sha256,
		rows_read, rows_used, events, expected, auc, auc_lower, auc_upper, oe, oe_lower, oe_upper,
		slope, slope_lower, slope_upper, citl, citl_lower, citl_upper, ici, brier, verdict, audit_json, token,
		model_parent_sha256, criteria)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
		r.AuditDate, r.RecordedAt, r.Model, r.ModelSHA, r.Cohort, r.CohortSHA, r.Rows, r.Used, r.Events, r.Expected,
		r.AUC[0], r.AUC[1], r.AUC[2], r.OE[0], r.OE[1], r.OE[2], r.Slope[0], r.Slope[1], r.Slope[2],
		r.CITL[0], r.CITL[1], r.CITL[2], r.ICI, r.Brier, r.Verdict, r.JSON, r.Token, r.ParentSHA, criteria)
	if err != nil {
		tx.Rollback()
		return nil, 0, fmt.Errorf("history: appending: %w", err)
	}
	id, err = res.LastInsertId()
	if err != nil {
		tx.Rollback()
		return nil, 0, fmt.Errorf("history: appending: %w", err)
	}
	return tx, id, nil
}

// Read returns every record of the store at path, by audit date and then
// by the order they were recorded. It never writes to the store: columns
// that a store made by an earlier version lacks read as their defaults.
func Read(path string) ([]Record, error) {
	db, err := openStore(path, false)
	if err != nil {
		return nil, err
	}
	defer db.Close()
	have, err := columns(db)
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	opt := func(name string) string {
		if have[name] {
			return name
		}
		return "''"
	}
	// The verdict of audit.json is read only for records without the
	// criteria column's value (made before stores kept it).
	verdict := `CASE WHEN json_valid(audit_json) THEN json_extract(audit_json, '$.verdict.criteria') END`
	if have["criteria"] {
		verdict = `CASE WHEN criteria = '' AND json_valid(audit_json) THEN json_extract(audit_json, '$.verdict.criteria') END`
	}
	rows, err := db.Query(`SELECT id, audit_date, recorded_at, model, model_sha256, cohort, cohort_sha256,
		rows_read, rows_used, events, expected, auc, auc_lower, auc_upper, oe, oe_lower, oe_upper,
		slope, slope_lower, slope_upper, citl, citl_lower, citl_upper, ici, brier, verdict, ` +
		opt("model_parent_sha256") + `, ` + opt("criteria") + `, ` + verdict + `,
		CASE WHEN json_valid(audit_json) THEN json_extract(audit_json, '$.over_time') END
		FROM audits ORDER BY audit_date, id`)
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	defer rows.Close()
	var out []Record
	for rows.Next() {
		var r Record
		var vals [14]sql.NullFloat64
		var criteria string
		var fromJSON, overTime sql.NullString
		if err := rows.Scan(&r.ID, &r.AuditDate, &r.RecordedAt, &r.Model, &r.ModelSHA, &r.Cohort, &r.CohortSHA,
			&r.Rows, &r.Used, &r.Events, &r.Expected, &vals[0], &vals[1], &vals[2], &vals[3], &vals[4], &vals[5],
			&vals[6], &vals[7], &vals[8], &vals[9], &vals[10], &vals[11], &vals[12], &vals[13], &r.Verdict,
			&r.ParentSHA, &criteria, &fromJSON, &overTime); err != nil {
			return nil, fmt.Errorf("history %s: %w", path, err)
		}
		f := func(i int) float64 {
			if !vals[i].Valid {
				return nan()
			}
			return vals[i].Float64
		}
		r.AUC = [3]float64{f(0), f(1), f(2)}
		r.OE = [3]float64{f(3), f(4), f(5)}
		r.Slope = [3]float64{f(6), f(7), f(8)}
		r.CITL = [3]float64{f(9), f(10), f(11)}
		r.ICI, r.Brier = f(12), f(13)
		r.Criteria = criteriaOf(criteria, fromJSON.String)
		r.Alarms = alarmsOf(overTime.String)
		out = append(out, r)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("history %s: %w", path, ErrNoAudits)
	}
	return out, nil
}

// Check runs SQLite's integrity check on the store.
func Check(path string) error {
	db, err := openStore(path, false)
	if err != nil {
		return err
	}
	defer db.Close()
	var res string
	if err := db.QueryRow("PRAGMA integrity_check").Scan(&res); err != nil {
		return fmt.Errorf("history %s: %w", path, err)
	}
	if res != "ok" {
		return fmt.Errorf("history %s: %w: %s", path, ErrIntegrity, res)
	}
	return nil
}

func nan() float64 { return math.NaN() }

// Remove deletes the record with the given ID from the store at path,
// in one transaction, and returns it with the number of records left;
// an ID the store does not hold is an error.
func Remove(path string, id int64) (Record, int, error) {
	db, err := openStore(path, false)
	if err != nil {
		return Record{}, 0, err
	}
	defer db.Close()
	tx, err := db.Begin()
	if err != nil {
		return Record{}, 0, fmt.Errorf("history %s: %w", path, err)
	}
	defer tx.Rollback()
	var r Record
	err = tx.QueryRow(`SELECT id, audit_date, recorded_at, model, model_sha256, cohort, cohort_sha256 FROM audits WHERE id = ?`, id).Scan(
		&r.ID, &r.AuditDate, &r.RecordedAt, &r.Model, &r.ModelSHA, &r.Cohort, &r.CohortSHA)
	if errors.Is(err, sql.ErrNoRows) {
		return Record{}, 0, fmt.Errorf("history %s: no record %d", path, id)
	}
	if err != nil {
		return Record{}, 0, fmt.Errorf("history %s: %w", path, err)
	}
	if _, err := tx.Exec(`DELETE FROM audits WHERE id = ?`, id); err != nil {
		return Record{}, 0, fmt.Errorf("history %s: removing record %d: %w", path, id, err)
	}
	var left int
	if err := tx.QueryRow(`SELECT COUNT(*) FROM audits`).Scan(&left); err != nil {
		return Record{}, 0, fmt.Errorf("history %s: removing record %d: %w", path, id, err)
	}
	if err := tx.Commit(); err != nil {
		return Record{}, 0, fmt.Errorf("history %s: removing record %d: %w", path, id, err)
	}
	return r, left, nil
}
