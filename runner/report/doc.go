// Package report renders results for people: the terminal summary now, the HTML report,
// Markdown summary and pairs table as they come. Renderings read the results; they never
// compute a statistic.
package report
