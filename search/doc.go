// Package search finds, for one channel and input energy, the Gaussian squashing map with
// the smallest bound (Run), and organises many such points into sweeps, warm-start chains
// and shards. Every reported optimum is re-checked: the map's complete positivity is
// certified in extended precision, the input supremum is taken, the bound is recomputed
// through an independent extended-precision path, and it must not fall below the best
// lower bound. Units and conventions are those of package gaussian.
package search
