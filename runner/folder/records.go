package folder

import (
	"rankplan/runner/results"
	"rankplan/spec"
)

// Record is the data of one audit record: a typed value that knows its event.
type Record interface {
	Event() string
}

// Tool is the build's identity as run.started and selftest.started record it.
type Tool struct {
	Name             string `json:"name"` // "rankplan"
	Version          string `json:"version"`
	Revision         string `json:"revision"` // VCS revision, "" when unknown
	Modified         bool   `json:"modified"` // the work tree had uncommitted changes at build time
	ExecutableSHA256 string `json:"executable_sha256"`
	ExecutableBytes  int64  `json:"executable_bytes"`
	Go               string `json:"go"`
	GOOS             string `json:"goos"`
	GOARCH           string `json:"goarch"`
	GOAMD64          string `json:"goamd64"` // the amd64 microarchitecture level the binary was built for, from its build information
}

// RunStarted opens a run's log, after the plan and its data were validated.
type RunStarted struct {
	Tool    Tool     `json:"tool"`
	Command []string `json:"command"`
	Out     string   `json:"out"` // the folder as named on the command line (the renderings show it)
	Workers int      `json:"workers"`
	CPUs    int      `json:"cpus"`
	Note    string   `json:"note"`
	// CreatedFolders are the folders above Out that did not exist and that the run
	// created, outermost first, as named on the command line; omitted when none.
	CreatedFolders []string `json:"created_folders,omitempty"`
}

// LockState says whether the plan was locked and whether it matches its lock.
type LockState struct {
	Status           string `json:"status"` // none, matches or deviates
	Path             string `json:"path,omitempty"`
	LockSHA256       string `json:"lock_sha256,omitempty"`
	LockedAt         string `json:"locked_at,omitempty"`
	LockedPlanSHA256 string `json:"locked_plan_sha256,omitempty"`
}

// The states of a lock.
const (
	LockNone     = "none"
	LockMatches  = "matches"
	LockDeviates = "deviates"
)

// Deviation is one difference between the locked plan and the plan that ran.
type Deviation struct {
	Changed  []string `json:"changed"` // key paths that differ from the locked plan
	Reason   string   `json:"reason"`
	DataSeen bool     `json:"data_seen"`
}

// PlanBound binds the plan: where it was, its bytes, and its lock.
type PlanBound struct {
	Path            string      `json:"path"`
	AbsolutePath    string      `json:"absolute_path"`
	Bytes           int         `json:"bytes"`
	RawSHA256       string      `json:"raw_sha256"`
	CanonicalSHA256 string      `json:"canonical_sha256"`
	PlanID          string      `json:"plan_id"`
	PlanFormat      int         `json:"plan_format"`
	Schema          string      `json:"schema"`
	Lock            LockState   `json:"lock"`
	Deviations      []Deviation `json:"deviations,omitempty"`
}

// DataBound binds the data file.
type DataBound struct {
	Path               string `json:"path"`
	AbsolutePath       string `json:"absolute_path"`
	Bytes              int64  `json:"bytes"`
	SHA256             string `json:"sha256"`
	Rows               int    `json:"rows"`
	HighPrecisionCells int    `json:"high_precision_cells"`
}

// Exclusions are the rows one analysis left out.
type Exclusions struct {
	Analysis     string              `json:"analysis"`
	Outcome      string              `json:"outcome"`
	N            int                 `json:"n"`
	RowsPerGroup map[string]int      `json:"rows_per_group"`
	Excluded     []results.Exclusion `json:"excluded"`
	Rule         string              `json:"rule"`
}

// ExclusionsApplied records, per analysis, the rows left out and why.
type ExclusionsApplied struct {
	Analyses []Exclusions `json:"analyses"`
}

// StreamUse is one purpose for which an analysis draws random numbers.
type StreamUse struct {
	Purpose   string `json:"purpose"`
	BlockSize int    `json:"block_size"`
}

// RandomStream identifies the random stream of an analysis.
type RandomStream struct {
	Generator string      `json:"generator"`
	Scheme    string      `json:"scheme"`
	KeyLayout string      `json:"key_layout"`
	Seed      string      `json:"seed"`
	Uses      []StreamUse `json:"uses"`
}

// AnalysisFinished records how one analysis ended.
type AnalysisFinished struct {
	Analysis        string            `json:"analysis"`
	Status          string            `json:"status"`
	PValueRequested spec.PValueMethod `json:"p_value_requested,omitempty"`
	PValueMethod    spec.PValueMethod `json:"p_value_method,omitempty"`
	Reason          string            `json:"reason,omitempty"`
	RandomStream    RandomStream      `json:"random_stream"`
}

// OutputWritten records one file of the folder with its size and SHA-256. The main file
// (results.json, validation.json) also carries its results digest, the fingerprint a
// rerun reproduces; a rendering for people carries a note.
type OutputWritten struct {
	File              string `json:"file"`
	Bytes             int    `json:"bytes"`
	SHA256            string `json:"sha256"`
	ResultsDigest     string `json:"results_digest,omitempty"`
	ResultsDigestRule string `json:"results_digest_rule,omitempty"`
	Note              string `json:"note,omitempty"`
}

// RunFinished closes the log of a run that wrote every output.
type RunFinished struct {
	Status   string `json:"status"` // "ok"
	ExitCode int    `json:"exit_code"`
	Analyses int    `json:"analyses"`
}

// Failure closes the log of a run or selftest that stopped: the error, and the signal
// (SIGINT, SIGTERM) when one stopped it.
type Failure struct {
	Error  string `json:"error"`
	Signal string `json:"signal,omitempty"`
}

// SelftestStarted opens a selftest folder's log.
type SelftestStarted struct {
	Tool    Tool     `json:"tool"`
	Command []string `json:"command"`
	Note    string   `json:"note"`
}

// CasesBound binds the reference cases.
type CasesBound struct {
	File       string   `json:"file"`
	SHA256     string   `json:"sha256"`
	Cases      int      `json:"cases"`
	AddedCases int      `json:"added_cases"`
	Datasets   []string `json:"datasets"`
}

// CasesEvaluated records the verdicts of the reference cases.
type CasesEvaluated struct {
	Cases       int      `json:"cases"`
	Passed      int      `json:"passed"`
	Failed      int      `json:"failed"`
	FailedCases []string `json:"failed_cases"`
}

// SelftestFinished closes a selftest folder's log.
type SelftestFinished struct {
	Status string `json:"status"`
	Cases  int    `json:"cases"`
	Passed int    `json:"passed"`
	Failed int    `json:"failed"`
}

func (RunStarted) Event() string        { return EventRunStarted }
func (PlanBound) Event() string         { return EventPlanBound }
func (DataBound) Event() string         { return EventDataBound }
func (ExclusionsApplied) Event() string { return EventExclusions }
func (AnalysisFinished) Event() string  { return EventAnalysisFinished }
func (OutputWritten) Event() string     { return EventOutputWritten }
func (RunFinished) Event() string       { return EventRunFinished }
func (SelftestStarted) Event() string   { return EventSelftestStarted }
func (CasesBound) Event() string        { return EventCasesBound }
func (CasesEvaluated) Event() string    { return EventCasesEvaluated }
func (SelftestFinished) Event() string  { return EventSelftestFinished }
