// Package schemas embeds rankplan's JSON Schemas (draft 2020-12) and compiles each once,
// under a fixed https identifier, so that every message is the same on every machine.
package schemas
