// Package report holds the console writers of beatnote's commands: the text, JSON (the design
// contract's object), CSV and Markdown output of check and triage, and the text and JSON of scan
// and profiles, with the value and margin formatting they share.
//
// The package judges nothing: verdicts, criteria and causes come from the diagnose engine. The
// acceptance report lives in report/acceptance, its signature and verification in report/sign.
package report
