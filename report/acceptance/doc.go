// Package acceptance builds the acceptance report of a circuit — the document a contractor hands
// to an operator — and writes it as PDF (fpdf, with charts drawn by gonum/plot), Markdown and
// JSON. The same Report value feeds all three.
//
// The package judges nothing: verdicts, criteria, causes and chart annotations come from the
// diagnose engine. docs/report.md describes the report; report/sign signs it.
package acceptance
