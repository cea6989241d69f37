package folder

import (
	"slices"
	"strconv"
	"strings"
)

// The files of a folder.
const (
	AuditFile      = "audit.jsonl"
	HeadFile       = "audit.head"
	SignatureFile  = "signature.json"
	ResultsFile    = "results.json"
	PlanCopyFile   = "plan.yaml"
	LockCopyFile   = "lock.json"
	ProvenanceFile = "provenance.intoto.json"
	ReportFile     = "report.html"
	SummaryFile    = "summary.md"
	PairsFile      = "pairs.csv"
	ValidationFile = "validation.json"
)

// The events of the audit log. An event's record holds the typed data named beside it.
const (
	EventRunStarted        = "run.started"        // RunStarted
	EventPlanBound         = "plan.bound"         // PlanBound
	EventDataBound         = "data.bound"         // DataBound
	EventExclusions        = "exclusions.applied" // ExclusionsApplied
	EventAnalysisFinished  = "analysis.finished"  // AnalysisFinished
	EventOutputWritten     = "output.written"     // OutputWritten
	EventRunFinished       = "run.finished"       // RunFinished
	EventRunFailed         = "run.failed"         // Failure
	EventSelftestStarted   = "selftest.started"   // SelftestStarted
	EventCasesBound        = "cases.bound"        // CasesBound
	EventCasesEvaluated    = "cases.evaluated"    // CasesEvaluated
	EventSelftestFinished  = "selftest.finished"  // SelftestFinished
	EventSelftestFailed    = "selftest.failed"    // Failure
	ResultsDigestRuleRun   = "SHA-256 of the RFC 8785 canonical form of results.json (which holds no times, hosts or paths)"
	ResultsDigestRuleCases = "SHA-256 of the RFC 8785 canonical form of the results member of validation.json (which holds no times, hosts or paths)"
)

// Kind is a kind of folder: the events that open and close its log, the records that come
// first in this order, the file whose results digest its log records, and the files the
// folder may hold besides its outputs.
type Kind struct {
	Name                      string
	Started, Finished, Failed string
	// Sequence is the fixed beginning of the log; SequenceText says what it guarantees.
	Sequence     []string
	SequenceText string
	// Main is the file whose output.written record carries the results digest.
	Main string
	// Repeats lists the events that may follow Sequence before the outputs.
	Repeats []string
	// Writes lists the files the kind's writer may create besides the log, the head and
	// the signature, in the order it writes them (a stopped writer may leave one before
	// its record).
	Writes []string
}

var (
	// Run is a folder written by rankplan run.
	Run = &Kind{
		Name: "run", Started: EventRunStarted, Finished: EventRunFinished, Failed: EventRunFailed,
		Sequence:     []string{EventRunStarted, EventPlanBound, EventDataBound, EventExclusions},
		SequenceText: "the plan was bound before the data, the data before any result",
		Main:         ResultsFile,
		Repeats:      []string{EventAnalysisFinished},
		Writes:       []string{ResultsFile, PlanCopyFile, LockCopyFile, ProvenanceFile, ReportFile, SummaryFile, PairsFile},
	}
	// Selftest is a folder written by rankplan selftest --out.
	Selftest = &Kind{
		Name: "selftest", Started: EventSelftestStarted, Finished: EventSelftestFinished, Failed: EventSelftestFailed,
		Sequence:     []string{EventSelftestStarted, EventCasesBound},
		SequenceText: "the reference cases were bound before any result",
		Main:         ValidationFile,
		Repeats:      []string{EventCasesEvaluated},
		Writes:       []string{ValidationFile, ReportFile},
	}
)

// KindOf returns the kind of folder whose log starts with event: Selftest for
// selftest.started, Run for anything else (whose sequence check then names what is wrong).
func KindOf(firstEvent string) *Kind {
	if firstEvent == Selftest.Started {
		return Selftest
	}
	return Run
}

// CheckOrder reports the first place where the events of a log break the kind's order:
// the fixed Sequence, then any number of Repeats, then output.written records, then at most
// one closing record (Finished or Failed) which must be last (Finished may be followed by
// Failed alone, when the folder could not be moved into place). A log cut short is in order
// as far as it goes (its incompleteness is reported on its own). Failed may come anywhere
// after the first record. It returns "" when the order holds.
func (k *Kind) CheckOrder(events []string) string {
	for i, e := range events {
		switch {
		case e == k.Failed:
			if i == 0 {
				return "the log starts with " + e
			}
			if i != len(events)-1 {
				return "record " + strconv.Itoa(i+1) + " (" + e + ") is not the last record"
			}
		case i < len(k.Sequence):
			if e != k.Sequence[i] {
				return "record " + strconv.Itoa(i+1) + " is " + e + ", where " + k.Sequence[i] + " belongs: the records do not start with " + strings.Join(k.Sequence, ", ")
			}
		case e == k.Finished:
			// The closing record is last, or followed only by Failed: a writer whose final
			// rename failed (another took DIR where flock(2) is lacking) says so after it.
			if i != len(events)-1 && !(i == len(events)-2 && events[i+1] == k.Failed) {
				return "record " + strconv.Itoa(i+1) + " (" + e + ") is not the last record"
			}
		case slices.Contains(k.Repeats, e):
			if events[i-1] != e && !slices.Contains(k.Sequence, events[i-1]) && !slices.Contains(k.Repeats, events[i-1]) {
				return "record " + strconv.Itoa(i+1) + " (" + e + ") comes after " + events[i-1]
			}
		case e == EventOutputWritten:
		default:
			return "record " + strconv.Itoa(i+1) + " is " + e + ", which has no place in a " + k.Name + " folder's log"
		}
	}
	return ""
}

// Files reports whether name is a file of the folder itself rather than an output: its
// audit log, the head, the signature.
func (k *Kind) Files(name string) bool {
	return name == AuditFile || name == HeadFile || (k == Run && name == SignatureFile)
}
