// Package report writes what beatnote tells its users: the console writers of check and
// triage (text, the JSON of the design contract, CSV, Markdown), and the acceptance report of
// one circuit as PDF (fpdf, with charts drawn by gonum/plot), Markdown and JSON, with its
// detached Ed25519 signature (RFC 8032; keys in PKCS #8 and PKIX PEM) and its verification.
//
// The package judges nothing: verdicts, criteria, causes and chart annotations come from the
// diagnose engine. docs/report.md describes the acceptance report and the signature format.
package report
