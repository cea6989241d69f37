// Package stats holds the pure numerics of rankplan: pooled midranks, the Kruskal-Wallis
// test with its asymptotic, exact and Monte Carlo p-values, chi-square tails, effect sizes
// with bootstrap intervals, Beta quantiles and quartiles. It does no I/O; its random draws
// come from package stream.
package stats
