package audit

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/htmlreport"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
)

// WriteOptions say what else lands with an audit folder.
type WriteOptions struct {
	// History, when set, is the history store the audit is appended to
	// in the same step: the folder and the store's record land together,
	// or neither does. AuditDate is the record's date (see
	// RecordHistory; empty: the audit's own).
	History   string
	AuditDate string
	// ReplaceRecord replaces a record of the same audit (model, cohort
	// and date) that the store already holds; without it such a record
	// is refused.
	ReplaceRecord bool
	// Inputs are further files that no output may overwrite (such as the
	// plan the audit came from); the audit's own inputs are known.
	Inputs []string
}

// Written says what a write replaced.
type Written struct {
	// Replaced says that the folder held an earlier output, written at
	// ReplacedAt (empty when unknown).
	Replaced   bool
	ReplacedAt string
	// Record is the number of the history record written (0: none), and
	// RecordDate the audit date it is stored under.
	Record     int64
	RecordDate string
}

// The names of every file an audit folder may hold (its figures are
// plots' names), for recognising folders written before the manifest.
var auditNames = []string{"report.md", "report.html", "audit.json", "calibration.svg", "roc.svg", "decision_curve.svg",
	"risk_histogram.svg", "subgroups.svg", "casemix_lp.svg", "casemix_differences.svg", FittedModelName,
	"clusters_auc.svg", "clusters_oe.svg", "clusters_citl.svg", "clusters_slope.svg"}

// CheckOutputDir refuses an output folder path that exists and is not a
// folder, or is a symbolic link, with a *ConfigError.
func CheckOutputDir(dir string) error {
	if err := atomicfile.CheckTarget(dir, true); err != nil {
		return &ConfigError{Msg: "--out " + err.Error()}
	}
	return nil
}

// CheckWrite refuses, before a long run, what Write would refuse after
// it: an output folder or file path that exists and is not a folder or
// regular file, two outputs at one path, an output that is an input, and
// a folder holding files riskaudit did not write. Errors are
// *ConfigError.
func CheckWrite(dir string, cfg *Config, opt WriteOptions) error {
	var files, extras []atomicfile.File
	for _, n := range auditNames {
		files = append(files, atomicfile.File{Path: n})
	}
	for _, p := range []string{cfg.ResampleLog, cfg.Shrunken, cfg.Update} {
		if p != "" {
			extras = append(extras, atomicfile.File{Path: p})
		}
	}
	inputs := append(append([]string{cfg.Model, cfg.Cohort.Path, cfg.Dev.Path, opt.History}, opt.Inputs...), cfg.clusterPaths()...)
	for _, in := range cfg.Imputation.Files {
		inputs = append(inputs, in.Path)
	}
	if _, _, err := layoutOutputs(dir, files, extras, inputs, "audit"); err != nil {
		return asConfigError(err)
	}
	// A run killed while it rewrote the folder's manifest leaves that
	// file's temporaries inside the folder; they are not the user's.
	atomicfile.CleanStale(dir)
	if entries, err := os.ReadDir(dir); err == nil {
		if _, err := ownedFolder(dir, "audit", entries); err != nil {
			return asConfigError(err)
		}
	}
	if opt.History != "" {
		if err := atomicfile.CheckTarget(opt.History, false); err != nil {
			return asConfigError(err)
		}
		if err := history.CheckStore(opt.History); err != nil {
			return &HistoryError{Path: opt.History, Err: err}
		}
	}
	return nil
}

// asConfigError makes a refused output a *ConfigError (exit status 2 on
// the command line), keeping it wrapped.
func asConfigError(err error) error {
	var ce *ConfigError
	if errors.As(err, &ce) {
		return err
	}
	return &ConfigError{Msg: err.Error(), Err: err}
}

// Write writes the audit into dir (created if absent), whole: report.md,
// audit.json, the figures and a manifest (.riskaudit.json) appear
// together, replacing an earlier audit in dir at once, so that no file
// of the earlier one survives; the result's further files go to their own
// paths in the same step, and with opt.History the history record too.
// On any failure nothing is left and what was there stays as it was.
//
// Write refuses an output path that is not a regular file (or, for dir,
// a folder), two outputs at one path, an output that is an input, and a
// dir holding files riskaudit did not write. A run killed while it wrote
// is finished or rolled back by the next Write into the same dir.
func Write(dir string, r *Result, opt WriteOptions) (*Written, error) {
	var md bytes.Buffer
	if err := report.Write(&md, r.Audit, r.Figures); err != nil {
		return nil, err
	}
	page, err := htmlPage("report.html", md.Bytes(), r.Figures)
	if err != nil {
		return nil, err
	}
	files := []atomicfile.File{{Path: "report.md", Data: md.Bytes()}, page}
	for _, f := range r.Figures {
		files = append(files, atomicfile.File{Path: f.Name, Data: f.SVG})
		if len(f.PNG) > 0 { // every figure drawn by plots has its PNG copy
			files = append(files, atomicfile.File{Path: f.PNGName(), Data: f.PNG})
		}
	}
	files = append(files, r.Folder...)
	// audit.json lists the folder's files, itself included; the result
	// is left as it was.
	a := *r.Audit
	a.Outputs = []string{"audit.json"}
	for _, f := range files {
		a.Outputs = append(a.Outputs, f.Path)
	}
	js, err := jsonout.Marshal(&a)
	if err != nil {
		return nil, fmt.Errorf("writing audit.json: %w", err)
	}
	files = append(files, atomicfile.File{Path: "audit.json", Data: js})
	inputs := append(r.inputs(), opt.History)
	inputs = append(inputs, opt.Inputs...)
	var rec *history.Record
	if opt.History != "" {
		// The record holds audit.json as written, outputs included.
		rr := *r
		rr.Audit = &a
		hr, err := historyRecord(opt.AuditDate, &rr)
		if err != nil {
			return nil, err
		}
		rec = &hr
	}
	return (&folderWrite{dir: dir, kind: "audit", written: r.Started, files: files, extras: r.Files, inputs: inputs,
		record: rec, history: opt.History, replace: opt.ReplaceRecord}).write()
}

// inputs are the paths of the audit's inputs.
func (r *Result) inputs() []string {
	var in []string
	for _, f := range r.Audit.Provenance.Inputs {
		in = append(in, f.Path)
	}
	return in
}

// manifestName is the file in every output folder that says riskaudit
// wrote it, what it wrote, and, while a write is not yet complete, how
// to finish or undo it.
const manifestName = ".riskaudit.json"

type manifest struct {
	Schema  string   `json:"schema"`
	Kind    string   `json:"kind"`
	Written string   `json:"written_at"`
	Files   []string `json:"files"`
	// State is "pending" from the moment the folder is in place until
	// every other output of the write is (the extras renamed, the
	// history record committed), then "done".
	State string `json:"state"`
	// PID is the writing process, whose temporaries hold what the write
	// replaced until it is done; it, the history record and the extras
	// are kept only while the write is pending.
	PID     int             `json:"pid,omitempty"`
	History *manifestRecord `json:"history,omitempty"`
	Extras  []manifestExtra `json:"extras,omitempty"`
}

type manifestRecord struct {
	Path  string `json:"path"`
	Token string `json:"token"`
}

type manifestExtra struct {
	Path    string `json:"path"`
	SHA256  string `json:"sha256"`
	Existed bool   `json:"existed"`
}

const manifestSchema = "riskaudit.output/1"

// folderWrite puts the folder dir (files named relative to it), the
// extra files (at their own paths; one directly inside dir joins the
// folder) and the history record in place together.
type folderWrite struct {
	dir, kind     string
	written       time.Time
	files, extras []atomicfile.File
	inputs        []string
	record        *history.Record
	history       string
	replace       bool
	// stopAt, in tests, ends the write as a killed process would at a
	// step ("swapped": the folder is in place, the record not committed;
	// "recorded": committed, the manifest still pending).
	stopAt string
}

func (fw *folderWrite) write() (*Written, error) {
	dir, kind, written, files, extras, inputs, rec, histPath := filepath.Clean(fw.dir), fw.kind, fw.written, fw.files, fw.extras, fw.inputs, fw.record, fw.history
	if err := resolvePending(dir); err != nil {
		return nil, err
	}
	files, extras, err := layoutOutputs(dir, files, extras, inputs, kind)
	if err != nil {
		return nil, err
	}
	w := &Written{}
	var set atomicfile.Set
	defer set.Abort()
	m := manifest{Schema: manifestSchema, Kind: kind, Written: written.UTC().Format(timeFormat), State: "done", PID: os.Getpid()}
	for _, e := range extras {
		if err := set.Add(e.Path, e.Data); err != nil {
			return nil, err
		}
		_, existed := set.Replaced(e.Path)
		sum := sha256.Sum256(e.Data)
		m.Extras = append(m.Extras, manifestExtra{Path: e.Path, SHA256: hex.EncodeToString(sum[:]), Existed: existed})
	}
	if rec != nil {
		rec.Token = outputToken(dir, files)
		m.History = &manifestRecord{Path: histPath, Token: rec.Token}
	}
	if len(m.Extras) > 0 || rec != nil {
		m.State = "pending"
	} else {
		m.PID = 0
	}
	for _, f := range files {
		m.Files = append(m.Files, f.Path)
	}
	mb, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return nil, err
	}
	all := append(slices.Clone(files), atomicfile.File{Path: manifestName, Data: append(mb, '\n')})
	if err := set.AddFolder(dir, all, func(entries []os.DirEntry) error {
		at, err := ownedFolder(dir, kind, entries)
		w.Replaced, w.ReplacedAt = len(entries) > 0, at
		return err
	}); err != nil {
		return nil, err
	}
	var pending *history.Pending
	if rec != nil {
		if pending, err = history.Begin(histPath, *rec, fw.replace); err != nil {
			if errors.Is(err, history.ErrDuplicate) {
				return nil, &ConfigError{Msg: fmt.Sprintf("%s: %v: nothing was written; add --replace-record to replace it", histPath, err), Err: err}
			}
			if errors.Is(err, history.ErrNotStore) {
				return nil, &HistoryError{Path: histPath, Err: err}
			}
			return nil, fmt.Errorf("recording the audit in %s: %w", histPath, err)
		}
	}
	if err := set.Commit(); err != nil {
		if pending != nil {
			pending.Rollback()
		}
		return nil, err
	}
	if fw.stopAt == "swapped" {
		if pending != nil {
			pending.Rollback() // as SQLite does for a process that died
		}
		return w, errStopped
	}
	if pending != nil {
		if err := pending.Commit(); err != nil {
			if uerr := set.Undo(); uerr != nil {
				return nil, fmt.Errorf("recording the audit in %s: %w (and putting back the earlier outputs: %v)", histPath, err, uerr)
			}
			return nil, fmt.Errorf("recording the audit in %s: %w; nothing was written", histPath, err)
		}
		w.Record, w.RecordDate = pending.ID, rec.AuditDate
	}
	if fw.stopAt == "recorded" {
		return w, errStopped
	}
	if m.State == "pending" {
		markDone(dir, m)
	}
	set.Finish()
	return w, nil
}

// errStopped ends a write that a test stops part-way.
var errStopped = errors.New("audit: write stopped by a test")

// markDone rewrites the manifest of a complete write as done, without
// what only a pending write needs (so that the same audit gives the same
// bytes). A failure leaves it pending, which the next write into the
// folder resolves.
func markDone(dir string, m manifest) {
	m.State, m.PID, m.History, m.Extras = "done", 0, nil, nil
	if b, err := json.MarshalIndent(m, "", "  "); err == nil {
		_ = atomicfile.WriteFile(filepath.Join(dir, manifestName), append(b, '\n'))
	}
}

// layoutOutputs checks the outputs of one write and returns the folder's
// files with any extra that lies directly inside dir moved among them.
// It refuses an extra deeper inside dir, two outputs at one path, an
// output that is an input, and output paths that are not regular files
// (dir: a folder).
func layoutOutputs(dir string, files, extras []atomicfile.File, inputs []string, kind string) ([]atomicfile.File, []atomicfile.File, error) {
	if err := CheckOutputDir(dir); err != nil {
		return nil, nil, err
	}
	absDir, err := filepath.Abs(dir)
	if err != nil {
		return nil, nil, err
	}
	if wd, err := os.Getwd(); err == nil && (wd == absDir || strings.HasPrefix(wd, absDir+string(filepath.Separator))) {
		return nil, nil, fmt.Errorf("the output folder %s is the current folder or holds it; an output folder is replaced whole, so give a folder of its own", dir)
	}
	if filepath.Dir(absDir) == absDir {
		return nil, nil, fmt.Errorf("the output folder %s is the top of the file system: give a folder of its own", dir)
	}
	seen := map[string]string{}
	claim := func(path, what string) error {
		abs, err := filepath.Abs(path)
		if err != nil {
			return err
		}
		if prev, ok := seen[abs]; ok {
			return fmt.Errorf("%s and %s are the same path, %s: give each output its own", prev, what, path)
		}
		seen[abs] = what
		return nil
	}
	for _, f := range files {
		if err := claim(filepath.Join(dir, f.Path), "the "+kind+"'s "+f.Path); err != nil {
			return nil, nil, err
		}
	}
	var rest []atomicfile.File
	for _, e := range extras {
		if err := atomicfile.CheckTarget(e.Path, false); err != nil {
			return nil, nil, err
		}
		if err := claim(e.Path, e.Path); err != nil {
			return nil, nil, err
		}
		abs, _ := filepath.Abs(e.Path)
		switch {
		case filepath.Dir(abs) == absDir:
			files = append(files, atomicfile.File{Path: filepath.Base(abs), Data: e.Data})
		case strings.HasPrefix(abs, absDir+string(filepath.Separator)):
			return nil, nil, fmt.Errorf("%s lies in a folder inside the output folder %s, which is replaced whole: put it directly in %s or elsewhere", e.Path, dir, dir)
		default:
			rest = append(rest, e)
		}
	}
	for _, in := range inputs {
		if in == "" {
			continue
		}
		abs, err := filepath.Abs(in)
		if err != nil {
			continue
		}
		if what, ok := seen[abs]; ok {
			return nil, nil, fmt.Errorf("the output %s (%s) is the input %s: inputs are never overwritten; choose another output path", abs, what, in)
		}
		// Checked whether or not the input exists yet: a history store
		// that the audit is about to create inside the folder would be
		// lost when the folder is replaced.
		if strings.HasPrefix(abs, absDir+string(filepath.Separator)) {
			return nil, nil, fmt.Errorf("the input %s lies inside the output folder %s, which is replaced whole: choose another output folder", in, dir)
		}
		ist, err := os.Stat(in)
		if err != nil {
			continue
		}
		for out, what := range seen {
			if ost, err := os.Stat(out); err == nil && os.SameFile(ist, ost) {
				return nil, nil, fmt.Errorf("the output %s (%s) is the input %s: inputs are never overwritten; choose another output path", out, what, in)
			}
		}
	}
	return files, rest, nil
}

// ownedFolder accepts an existing folder for replacement when riskaudit
// wrote every file in it: the files its manifest names, or, in a folder
// written before manifests, only files with the names this kind of
// output uses. It returns when the earlier output was written.
func ownedFolder(dir, kind string, entries []os.DirEntry) (string, error) {
	if len(entries) == 0 {
		return "", nil
	}
	known := map[string]bool{manifestName: true}
	written := ""
	if m, err := readManifest(dir); err == nil {
		if m.Kind != kind {
			return "", fmt.Errorf("%s holds riskaudit's %s, not an %s: choose another folder", dir, m.Kind, kind)
		}
		for _, f := range m.Files {
			known[f] = true
		}
		written = m.Written
	} else if errors.Is(err, fs.ErrNotExist) {
		for _, n := range namesOf(kind) {
			known[n] = true
		}
		if !earlierOutput(dir, kind) {
			known = map[string]bool{}
		}
	} else {
		return "", err
	}
	var foreign []string
	for _, e := range entries {
		if !known[e.Name()] || !e.Type().IsRegular() {
			foreign = append(foreign, e.Name())
		}
	}
	if len(foreign) > 0 {
		return "", fmt.Errorf("%s holds files riskaudit did not write (%s): an output folder is replaced whole, so give a new or empty folder, or move them", dir, listNames(foreign))
	}
	return written, nil
}

// namesOf lists the file names an output folder of kind may hold.
func namesOf(kind string) []string {
	switch kind {
	case "comparison":
		return []string{"compare.md", "compare.html", "compare.json", "decision_curves.svg"}
	case "trend":
		return []string{"trend.md", "trend.html", "trend.json", "trend_auc.svg", "trend_oe.svg", "trend_slope.svg", "trend_citl.svg"}
	}
	return auditNames
}

// earlierOutput reports whether a folder without a manifest holds an
// output riskaudit wrote: its JSON (for a trend, its Markdown) says so.
func earlierOutput(dir, kind string) bool {
	name, mark := "audit.json", `"schema": "riskaudit.audit/`
	switch kind {
	case "comparison":
		name, mark = "compare.json", `"schema": "riskaudit.compare/`
	case "trend":
		name, mark = "trend.md", "# Audit trend"
	}
	b, err := os.ReadFile(filepath.Join(dir, name))
	return err == nil && bytes.Contains(b[:min(len(b), 4096)], []byte(mark))
}

// listNames lists up to ten names, then how many more.
func listNames(names []string) string {
	slices.Sort(names)
	if len(names) > 10 {
		return strings.Join(names[:10], ", ") + fmt.Sprintf(", … and %d more", len(names)-10)
	}
	return strings.Join(names, ", ")
}

func readManifest(dir string) (*manifest, error) {
	b, err := os.ReadFile(filepath.Join(dir, manifestName))
	if err != nil {
		return nil, err
	}
	var m manifest
	if err := json.Unmarshal(b, &m); err != nil || m.Schema != manifestSchema {
		return nil, fmt.Errorf("%s: %s is not riskaudit's manifest: give a new or empty folder", dir, manifestName)
	}
	return &m, nil
}

// resolvePending finishes or undoes a write into dir that a killed run
// left pending: when its history record was committed (or, without one,
// every extra holds the new content) the write is complete and only its
// temporaries go; otherwise what it replaced comes back and what it
// added goes.
func resolvePending(dir string) error {
	atomicfile.CleanStale(dir) // a killed run's manifest temporaries (markDone)
	m, err := readManifest(dir)
	if err != nil || m.State != "pending" {
		return nil
	}
	if m.PID != os.Getpid() && atomicfile.ProcessAlive(m.PID) {
		return fmt.Errorf("%s is being written by another riskaudit (process %d): wait for it to finish", dir, m.PID)
	}
	complete := true
	if m.History != nil {
		ok, err := history.HasToken(m.History.Path, m.History.Token)
		if err != nil {
			return fmt.Errorf("finishing the interrupted write of %s: %w", dir, err)
		}
		complete = ok
	} else {
		for _, e := range m.Extras {
			b, err := os.ReadFile(e.Path)
			sum := sha256.Sum256(b)
			complete = complete && err == nil && hex.EncodeToString(sum[:]) == e.SHA256
		}
	}
	pidPart := ".riskaudit-old-" + strconv.Itoa(m.PID) + "-"
	oldOf := func(path string) string {
		matches, _ := filepath.Glob(filepath.Join(filepath.Dir(path), "."+filepath.Base(path)+pidPart+"*"))
		if len(matches) == 1 {
			return matches[0]
		}
		return ""
	}
	if complete {
		markDone(dir, *m)
		for _, p := range append([]string{dir}, extraPaths(m)...) {
			if old := oldOf(p); old != "" {
				os.RemoveAll(old)
			}
		}
		return nil
	}
	for _, e := range m.Extras {
		if old := oldOf(e.Path); old != "" {
			os.Rename(old, e.Path)
		} else if !e.Existed {
			os.Remove(e.Path)
		}
	}
	if old := oldOf(dir); old != "" {
		if err := os.RemoveAll(dir); err != nil {
			return fmt.Errorf("undoing the interrupted write of %s: %w", dir, err)
		}
		return os.Rename(old, dir)
	}
	return os.RemoveAll(dir)
}

func extraPaths(m *manifest) []string {
	var p []string
	for _, e := range m.Extras {
		p = append(p, e.Path)
	}
	return p
}

// outputToken names one write for its history record: a digest of the
// folder's absolute path and its files, so that the same audit gives the
// same bytes everywhere (an identical audit written again into the same
// folder gets the same token, and a record of either vouches for both).
func outputToken(dir string, files []atomicfile.File) string {
	abs, _ := filepath.Abs(dir)
	h := sha256.New()
	h.Write([]byte(abs))
	for _, f := range files {
		fmt.Fprintf(h, "\x00%s\x00%d\x00", f.Path, len(f.Data))
		h.Write(f.Data)
	}
	return hex.EncodeToString(h.Sum(nil)[:16])
}

// CheckAuditDate refuses a date that is not a calendar date written
// YYYY-MM-DD (2026-02-30 and 2026-13-01 are refused), with a
// *ConfigError.
func CheckAuditDate(date string) error {
	if t, err := time.Parse(time.DateOnly, date); err != nil || t.Format(time.DateOnly) != date {
		return configErrorf("--audit-date %q: give a date as YYYY-MM-DD", date)
	}
	return nil
}

// RecordHistory appends the audit's summary, and its whole audit.json,
// to the history store at path, as the audit of the cohort of date
// (YYYY-MM-DD; empty: the audit's own date, provenance.audit_date, else
// the day the audit started), recorded at the time the audit started. (Write with WriteOptions.History does the same in
// one step with the audit folder.)
func RecordHistory(path, date string, r *Result) error {
	rec, err := historyRecord(date, r)
	if err != nil {
		return err
	}
	if err := history.Append(path, rec); err != nil {
		return fmt.Errorf("recording the audit in %s: %w", path, err)
	}
	return nil
}

// historyRecord is the history store's record of the audit.
func historyRecord(date string, r *Result) (history.Record, error) {
	a, started := r.Audit, r.Started
	if date == "" {
		date = a.Provenance.AuditDate
	}
	if date == "" {
		date = started.Format(time.DateOnly)
	}
	if err := CheckAuditDate(date); err != nil {
		return history.Record{}, err
	}
	js, err := jsonout.Marshal(a)
	if err != nil {
		return history.Record{}, err
	}
	rec := history.Record{AuditDate: date, RecordedAt: started.Format(time.RFC3339), Model: a.Model.Name,
		Rows: a.Cohort.Rows, Used: a.Cohort.Used, Events: a.Cohort.Events, Expected: a.Calibration.Expected,
		AUC:   [3]float64{a.Discrimination.AUC, a.Discrimination.CI[0], a.Discrimination.CI[1]},
		OE:    [3]float64{a.Calibration.OE, a.Calibration.OECI[0], a.Calibration.OECI[1]},
		Slope: [3]float64{a.Calibration.Slope, a.Calibration.SlopeCI[0], a.Calibration.SlopeCI[1]},
		CITL:  [3]float64{a.Calibration.CITL, a.Calibration.CITLCI[0], a.Calibration.CITLCI[1]},
		ICI:   a.Calibration.ICI, Brier: a.Overall.Brier, Verdict: a.Verdict.Status, JSON: string(js),
		ParentSHA: a.Model.ParentSHA256, Criteria: []history.Criterion{}}
	for _, c := range r.Criteria {
		sev := c.Severity
		if sev == "" {
			sev = "fail"
		}
		rec.Criteria = append(rec.Criteria, history.Criterion{Measure: c.Measure, AtLeast: c.AtLeast, AtMost: c.AtMost,
			Between: c.Between, Contains: c.Contains, Severity: sev})
	}
	for _, in := range a.Provenance.Inputs {
		switch in.Role {
		case "model":
			rec.ModelSHA = in.SHA256
		case "cohort":
			rec.Cohort, rec.CohortSHA = in.Path, in.SHA256
		}
	}
	return rec, nil
}

// htmlPage renders a Markdown report as the self-contained HTML page
// name, with the figures it shows embedded.
func htmlPage(name string, md []byte, figures []plots.Figure) (atomicfile.File, error) {
	files := make(map[string][]byte, len(figures))
	for _, f := range figures {
		files[f.Name] = f.SVG
	}
	b, err := htmlreport.Page(md, files)
	if err != nil {
		return atomicfile.File{}, fmt.Errorf("writing %s: %w", name, err)
	}
	return atomicfile.File{Path: name, Data: b}, nil
}
