package audit

import (
	"os"
	"os/user"
)

// Actor says who did something: the operating-system user and host, the CI
// run if any, and the declared signer and reason.
type Actor struct {
	User   string            `json:"user"`             // OS user name
	Host   string            `json:"host"`             // os.Hostname
	CI     map[string]string `json:"ci,omitempty"`     // CI identifiers found in the environment (see CurrentActor)
	Signer string            `json:"signer,omitempty"` // --signer
	Reason string            `json:"reason,omitempty"` // --reason
}

// ciVariables is the fixed list of environment variables CurrentActor
// records when set. They identify a CI run, job, repository or commit and
// never hold secrets.
var ciVariables = []string{
	"CI",
	// GitHub Actions
	"GITHUB_ACTIONS", "GITHUB_RUN_ID", "GITHUB_RUN_NUMBER", "GITHUB_RUN_ATTEMPT",
	"GITHUB_REPOSITORY", "GITHUB_SHA", "GITHUB_REF", "GITHUB_WORKFLOW", "GITHUB_JOB",
	"GITHUB_ACTOR", "GITHUB_SERVER_URL",
	// GitLab CI
	"GITLAB_CI", "CI_PIPELINE_ID", "CI_PIPELINE_URL", "CI_JOB_ID", "CI_JOB_URL",
	"CI_COMMIT_SHA", "CI_PROJECT_PATH",
	// Jenkins and others using the same names
	"BUILD_NUMBER", "BUILD_ID", "BUILD_URL", "JOB_NAME",
	// Buildkite
	"BUILDKITE_BUILD_ID", "BUILDKITE_BUILD_URL", "BUILDKITE_COMMIT",
	// CircleCI
	"CIRCLE_BUILD_NUM", "CIRCLE_WORKFLOW_ID", "CIRCLE_SHA1",
	// Travis CI
	"TRAVIS_BUILD_ID", "TRAVIS_JOB_ID", "TRAVIS_COMMIT",
	// Azure Pipelines
	"BUILD_BUILDID", "BUILD_SOURCEVERSION",
}

// CurrentActor returns the actor of this process: User from os/user (falling
// back to $USER, then $USERNAME), Host from os.Hostname ("" if unknown), and
// CI holding every variable of this fixed list that getenv reports non-empty,
// with its value as found:
//
//	CI
//	GITHUB_ACTIONS GITHUB_RUN_ID GITHUB_RUN_NUMBER GITHUB_RUN_ATTEMPT
//	GITHUB_REPOSITORY GITHUB_SHA GITHUB_REF GITHUB_WORKFLOW GITHUB_JOB
//	GITHUB_ACTOR GITHUB_SERVER_URL
//	GITLAB_CI CI_PIPELINE_ID CI_PIPELINE_URL CI_JOB_ID CI_JOB_URL
//	CI_COMMIT_SHA CI_PROJECT_PATH
//	BUILD_NUMBER BUILD_ID BUILD_URL JOB_NAME
//	BUILDKITE_BUILD_ID BUILDKITE_BUILD_URL BUILDKITE_COMMIT
//	CIRCLE_BUILD_NUM CIRCLE_WORKFLOW_ID CIRCLE_SHA1
//	TRAVIS_BUILD_ID TRAVIS_JOB_ID TRAVIS_COMMIT
//	BUILD_BUILDID BUILD_SOURCEVERSION
//
// CI is nil when none is set. getenv is os.Getenv when nil (tests inject
// their own). Attributable records ("who") are required by 21 CFR Part 11
// §11.10(e) and EU GMP Annex 11 §9.
func CurrentActor(getenv func(string) string, signer, reason string) Actor {
	if getenv == nil {
		getenv = os.Getenv
	}
	a := Actor{Signer: signer, Reason: reason}
	if u, err := user.Current(); err == nil && u.Username != "" {
		a.User = u.Username
	} else if v := getenv("USER"); v != "" {
		a.User = v
	} else {
		a.User = getenv("USERNAME")
	}
	if h, err := os.Hostname(); err == nil {
		a.Host = h
	}
	for _, name := range ciVariables {
		if v := getenv(name); v != "" {
			if a.CI == nil {
				a.CI = make(map[string]string)
			}
			a.CI[name] = v
		}
	}
	return a
}
