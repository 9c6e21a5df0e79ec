package search

import (
	"cmp"
	"fmt"
	"hash/fnv"
	"math"
	"slices"
	"strconv"
	"strings"
)

// Cost model. A shard split needs the relative cost of points, not seconds: PointCost is in
// units of one finite-energy tms-split search (about 0.7 s of one core on the reference
// machine with the default starts, measured with `keyceiling bound`). Measured ratios at
// finite energy: split about 0.05; covariant about 2.5; general about 3; auto (tms-split,
// then covariant, then general) about 4. The unconstrained limit (energy inf) evaluates a
// ladder of energies and costs about twice a finite point for every family. Entanglement-
// breaking points cost 0: they are not searched. The model only has to rank chains roughly;
// a wrong factor moves the balance, never a result.
var familyCost = map[string]float64{
	"split": 0.05, "tms-split": 1, "covariant": 2.5, "general": 3, "auto": 4,
}

// infCostFactor is the cost of an unconstrained point relative to a finite-energy one.
const infCostFactor = 2

// PointCost estimates the relative cost of searching one point with settings s.
func PointCost(pp PlanPoint, s Settings) float64 {
	if pp.Breaking {
		return 0
	}
	fam := s.Family
	if fam == "" {
		fam = "auto"
	}
	c, ok := familyCost[fam]
	if !ok {
		c = 4
	}
	if math.IsInf(pp.Point.Energy, 1) {
		c *= infCostFactor
	}
	return c
}

// ChainCost is the sum of the chain's point costs.
func ChainCost(c Chain, s Settings) float64 {
	total := 0.0
	for _, pp := range c.Points {
		total += PointCost(pp, s)
	}
	return total
}

// shardSlack is how far above the mean shard cost (as a fraction of the mean, and never more
// than the largest chain cost) a shard may fill with the chains that prefer it.
const shardSlack = 0.05

// ShardChains splits chains into n shards and returns the shard (0..n-1) of each chain.
//
// The split is rendezvous (highest-random-weight) hashing with bounded loads: every chain
// ranks the shards by a hash of (chain key, shard number) and goes to the first one in its
// ranking whose cost stays within cap = mean + min(0.05 mean, largest chain cost); if none
// has room it goes to the least-loaded shard (lowest number on a tie). Chains are placed in
// order of decreasing cost, ties by key. Why this design:
//   - stable: it depends only on the chain keys and the cost model, never on the machine, the
//     map order or the order of the plan's lines;
//   - balanced: a chain placed within cap leaves its shard at most at cap; a chain placed on
//     the least-loaded shard finds it at most at the mean of the other chains, so no shard
//     exceeds mean + largest chain cost (the bound the tests check);
//   - changes little with n: a chain's preferred shard among n+1 is its preferred shard among
//     n unless it is the new one (a fraction 1/(n+1) of chains, the least any split can move),
//     and only capacity overflow moves others; a greedy least-loaded split would reshuffle
//     almost every chain when n changes.
func ShardChains(chains []Chain, n int, s Settings) []int {
	out := make([]int, len(chains))
	if n <= 1 {
		return out
	}
	costs := make([]float64, len(chains))
	total, largest := 0.0, 0.0
	for i, c := range chains {
		costs[i] = ChainCost(c, s)
		total += costs[i]
		largest = max(largest, costs[i])
	}
	mean := total / float64(n)
	capacity := mean + min(shardSlack*mean, largest)
	order := make([]int, len(chains))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		if c := cmp.Compare(costs[b], costs[a]); c != 0 {
			return c
		}
		return strings.Compare(chains[a].Key, chains[b].Key)
	})
	load := make([]float64, n)
	ranks := make([]int, n)
	scores := make([]uint64, n)
	for _, i := range order {
		kh := keyHash(chains[i].Key)
		for j := range ranks {
			ranks[j] = j
			scores[j] = mix64(kh ^ mix64(uint64(j)+0x9e3779b97f4a7c15))
		}
		slices.SortFunc(ranks, func(a, b int) int {
			if c := cmp.Compare(scores[b], scores[a]); c != 0 {
				return c
			}
			return cmp.Compare(a, b)
		})
		dst := -1
		for _, j := range ranks {
			if load[j]+costs[i] <= capacity {
				dst = j
				break
			}
		}
		if dst < 0 {
			dst = 0
			for j := range load {
				if load[j] < load[dst] {
					dst = j
				}
			}
		}
		out[i] = dst
		load[dst] += costs[i]
	}
	return out
}

func keyHash(s string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(s))
	return h.Sum64()
}

// mix64 is the SplitMix64 finalizer: it spreads fnv's output over all 64 bits.
func mix64(z uint64) uint64 {
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// Shard names one part of a split run: Index in 0..Count-1. The zero value (Count 0) and
// Count 1 mean an unsharded run.
type Shard struct {
	Index, Count int
}

// Sharded reports whether the run is one part of several.
func (s Shard) Sharded() bool { return s.Count > 1 }

// String is "I/N".
func (s Shard) String() string { return fmt.Sprintf("%d/%d", s.Index, s.Count) }

// ParseShard parses "I/N" with 0 <= I < N (I is 0-based).
func ParseShard(text string) (Shard, error) {
	a, b, ok := strings.Cut(text, "/")
	if !ok || !isDigits(a) || !isDigits(b) || len(a) > 6 || len(b) > 6 {
		return Shard{}, fmt.Errorf("shard %q: want I/N with 0 <= I < N, e.g. 0/4", text)
	}
	i, _ := strconv.Atoi(a)
	n, _ := strconv.Atoi(b)
	if n < 1 || i >= n {
		return Shard{}, fmt.Errorf("shard %q: want I/N with 0 <= I < N, e.g. 0/4", text)
	}
	return Shard{Index: i, Count: n}, nil
}

// ChainsOf returns the chains of the plan that belong to shard sh, in plan order.
func (p *Plan) ChainsOf(sh Shard) []Chain {
	chains := p.Chains()
	if !sh.Sharded() {
		return chains
	}
	assign := ShardChains(chains, sh.Count, p.Settings)
	var out []Chain
	for i, c := range chains {
		if assign[i] == sh.Index {
			out = append(out, c)
		}
	}
	return out
}
