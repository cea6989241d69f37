// Package stats holds the pure numerics of rankplan: pooled midranks, the Kruskal-Wallis test, chi-square tails and quartiles.
package stats
