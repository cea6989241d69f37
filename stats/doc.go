// Package stats holds the pure numerics of rankplan: pooled midranks, the Kruskal-Wallis
// test with its asymptotic, exact and Monte Carlo p-values, central and noncentral
// chi-square tails, effect sizes with noncentral and bootstrap intervals, Beta quantiles
// and quartiles. It does no I/O; its random draws come from package stream.
package stats
