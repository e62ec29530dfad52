#!/usr/bin/env python3
"""Compute the optimum of the subtour-elimination linear programme of symmetric TSPLIB instances.

    pip install scipy numpy networkx==2.8.8 tsplib95==0.7.1
    python3 bench-harness/scripts/subtour_lp.py FILE.tsp [FILE.tsp ...] [--json]

The programme, over the edges e = {i, j} of the complete graph, is

    minimise    sum_e c_e x_e
    subject to  x(delta(v)) = 2      for every node v,
                x(delta(S)) >= 2     for every proper non-empty node set S,
                0 <= x_e <= 1.

Held and Karp (1970) showed that the best 1-tree bound over all node penalties (the Held-Karp
bound) equals this optimum. The script is an independent reference for wend's own Held-Karp
bound: it solves the programme with a general-purpose LP solver (scipy.optimize.linprog, method
"highs") rather than through 1-trees, so the benchmark docs can say how far below the
TSPLIB optimum each instance's true Held-Karp value lies and how close wend's bound gets to it.
It is a reference run beside the benchmarks, not part of the tests.

Method: cutting planes with column generation. After each LP solve the support graph (edges
with x_e > 0, weighted by x_e) is searched for violated subtour constraints: when it is
disconnected every connected component is one; inside each component (or the whole graph when
it is connected) paths of edges with x_e = 1 are contracted, which keeps every violated cut, and
a flow-equivalent tree of minimum cuts (n - 1 max flows with scipy) yields the node sets with
x(delta(S)) < 2 at once; when it finds none in a connected support graph, networkx.stoer_wagner
confirms that the global minimum cut is at least 2. Cuts that stay slack for a few solves leave
the LP again (separation is exact, so this cannot weaken the result). Instances with more than
FULL_LP_MAX_NODES (100) nodes start from a sparse edge set, the 20 nearest neighbours of every
node plus a nearest-neighbour tour, and after every solve all edges of the complete graph are
priced with the LP duals; edges of negative reduced cost are added. The loop ends when no edge
prices out and no cut is violated: then the LP solution satisfies every subtour constraint and
is optimal over all edges, so its value is the subtour LP optimum (to about 1e-6).

Output, per instance: name (the file name without its extension), nodes, LP optimum, the
optimum rounded up (tour lengths are integers, so no tour is shorter), LP solves ("rounds"),
cuts added in total, edges (columns) in the final LP, and wall seconds including reading the
file. With --json, one JSON object a line with keys instance, nodes, subtour_lp,
subtour_lp_ceil, rounds, cuts, edges, seconds. A file whose TYPE is not TSP (or that fails
otherwise) is refused with a one-line message on stderr naming it, the other files are still
run, and the exit status is then 1.
"""
import json
import math
import os
import sys
import time

import networkx as nx
import numpy as np
import tsplib95
from scipy import sparse
from scipy.optimize import linprog
from scipy.sparse import csgraph

FULL_LP_MAX_NODES = 100  # up to this many nodes every edge is a column from the start
NEIGHBOURS = 20  # nearest neighbours per node in the starting edge set of column generation
SUPPORT_EPS = 1e-9  # x_e above this is in the support graph
ONE_EPS = 1e-9  # x_e at least 1 - ONE_EPS is contracted before the min-cut search
CUT_EPS = 1e-6  # a cut is violated when x(delta(S)) < 2 - CUT_EPS
PRICE_EPS = 1e-6  # an edge enters when its reduced cost is below -PRICE_EPS
DUAL_CHECK_EPS = 1e-6  # fractional LP edges: |reduced cost| below this times max c_e
FLOW_SCALE = 2 ** 26  # max flows run on integer capacities round(x * FLOW_SCALE)
PRICE_BLOCK = 512  # rows of the distance matrix priced at a time
CUT_AGE_LIMIT = 20  # a cut slack in this many solves in a row leaves the LP (it may come back)
MAX_ROUNDS = 5000  # give up (with an error) after this many LP solves


# ---------------------------------------------------------------------------- distances

def nint(a):
    """TSPLIB's nint: floor(a + 0.5), which is what tsplib95 computes as int(a + 0.5) for a >= 0."""
    return np.floor(a + 0.5)


def distance_matrix(problem, nodes):
    """Integer distance matrix, TSPLIB 95 rounding; vectorised for EUC_2D, CEIL_2D and ATT and
    checked against problem.get_weight on a sample of pairs, otherwise built from get_weight."""
    n = len(nodes)
    kind = (problem.edge_weight_type or "").strip().upper()
    coords = problem.node_coords if kind in ("EUC_2D", "CEIL_2D", "ATT") else None
    if coords and all(len(coords[v]) == 2 for v in nodes):
        xy = np.array([coords[v] for v in nodes], dtype=float)
        dx = xy[:, 0][:, None] - xy[:, 0][None, :]
        dy = xy[:, 1][:, None] - xy[:, 1][None, :]
        sq = dx * dx + dy * dy
        if kind == "EUC_2D":
            d = nint(np.sqrt(sq))
        elif kind == "CEIL_2D":
            d = np.ceil(np.sqrt(sq))
        else:  # ATT pseudo-Euclidean
            r = np.sqrt(sq / 10.0)
            t = nint(r)
            d = np.where(t < r, t + 1, t)
        d = d.astype(np.int64)
        np.fill_diagonal(d, 0)
        rng = np.random.default_rng(12345)
        sample = rng.integers(0, n, size=(min(2000, n * n), 2))
        for i, j in sample:
            want = problem.get_weight(nodes[i], nodes[j]) if i != j else 0
            if d[i, j] != want:
                raise RuntimeError(f"vectorised {kind} distance of nodes {nodes[i]}, {nodes[j]} "
                                   f"is {d[i, j]}, tsplib95 says {want}")
        return d
    d = np.zeros((n, n), dtype=np.int64)
    for i in range(n):
        a = nodes[i]
        for j in range(i + 1, n):
            d[i, j] = d[j, i] = problem.get_weight(a, nodes[j])
    return d


# ---------------------------------------------------------------------------- starting edges

def nearest_neighbour_tour(dist):
    n = len(dist)
    seen = np.zeros(n, dtype=bool)
    tour = [0]
    seen[0] = True
    for _ in range(n - 1):
        row = np.where(seen, np.inf, dist[tour[-1]].astype(float))
        nxt = int(np.argmin(row))
        tour.append(nxt)
        seen[nxt] = True
    return tour


def starting_edges(dist):
    """All edges for small instances; otherwise k nearest neighbours plus a nearest-neighbour
    tour (the tour keeps the first LP feasible)."""
    n = len(dist)
    if n <= FULL_LP_MAX_NODES:
        return np.triu_indices(n, 1)
    k = min(NEIGHBOURS, n - 1)
    d = dist.astype(float)
    np.fill_diagonal(d, np.inf)
    near = np.argpartition(d, k - 1, axis=1)[:, :k]
    u = np.repeat(np.arange(n), k)
    v = near.ravel()
    tour = nearest_neighbour_tour(dist)
    u = np.concatenate([u, tour])
    v = np.concatenate([v, tour[1:] + tour[:1]])
    a, b = np.minimum(u, v), np.maximum(u, v)
    pairs = np.unique(a * n + b)
    return pairs // n, pairs % n


# ---------------------------------------------------------------------------- separation

def cut_value(mask, u, v, w):
    return float(w[mask[u] != mask[v]].sum())


def flow_tree_cuts(m, u, v, w):
    """Node sets (bool masks over m nodes) with cut value < 2 - CUT_EPS among the m - 1 minimum
    s-t cuts that build a flow-equivalent tree of the graph with edges (u, v, w): each node s
    is cut from its current tree parent t, and the later nodes on s's side whose parent was t
    are hung below s. The smallest of those m - 1 cuts is a global minimum cut."""
    cap = np.rint(w * FLOW_SCALE).astype(np.int64)
    keep = cap > 0
    degree = np.bincount(u, cap, m) + np.bincount(v, cap, m)
    if degree.max() * 2 >= 2 ** 31:  # flows and residuals stay below twice a node's capacity
        raise RuntimeError("capacities too large for int32 max flow")
    uu, vv, cap = u[keep], v[keep], cap[keep].astype(np.int32)
    graph = sparse.csr_matrix((np.concatenate([cap, cap]),
                               (np.concatenate([uu, vv]), np.concatenate([vv, uu]))),
                              shape=(m, m), dtype=np.int32)
    graph.sum_duplicates()
    graph.sort_indices()
    parent = np.zeros(m, dtype=np.int64)
    index = np.arange(m)
    found = []
    for s in range(1, m):
        t = int(parent[s])
        flow = csgraph.maximum_flow(graph, s, t).flow
        residual = (graph - flow).tocsr()
        residual.data[residual.data < 0] = 0
        residual.eliminate_zeros()
        side = np.zeros(m, dtype=bool)
        side[csgraph.breadth_first_order(residual, s, directed=True,
                                         return_predecessors=False)] = True
        if cut_value(side, u, v, w) < 2 - CUT_EPS:
            found.append(side)
        parent[(index > s) & side & (parent == t)] = s
    return found


def connected_cuts(m, u, v, w, confirm):
    """Violated cuts (bool masks over m nodes) of a connected support graph with edges (u, v, w)
    over nodes 0..m-1 whose x-degrees are all 2. With confirm, when the flow tree finds none,
    networkx.stoer_wagner checks that the global minimum cut is not below 2 either."""
    # Contract paths of edges with x_e = 1. If S separates the ends a, b of such an edge and
    # x(delta(S)) < 2, putting b on a's side gives x(delta(S + b)) = x(delta(S)) + x(delta(b))
    # - 2 x(b, S) <= x(delta(S)), since x(delta(b)) = 2 and x(b, S) >= x_ab = 1. Repeating this
    # never empties the other side (a non-empty set of nodes of 1-paths has cut value >= 2),
    # so some violated cut splits no 1-path and survives the contraction.
    one = w >= 1 - ONE_EPS
    ones = sparse.coo_matrix((np.ones(one.sum()), (u[one], v[one])), shape=(m, m)).tocsr()
    k, group = csgraph.connected_components(ones, directed=False)
    if k < 3:
        return []  # one node: a tour; two: two paths, and the cut between them is exactly 2
    gu, gv = group[u], group[v]
    cross = gu != gv
    a, b = np.minimum(gu[cross], gv[cross]), np.maximum(gu[cross], gv[cross])
    shrunk = sparse.coo_matrix((w[cross], (a, b)), shape=(k, k)).tocsr()
    shrunk.sum_duplicates()
    shrunk = shrunk.tocoo()
    su, sv, sw = shrunk.row.astype(np.int64), shrunk.col.astype(np.int64), shrunk.data
    found = flow_tree_cuts(k, su, sv, sw)
    if not found and confirm:
        g = nx.Graph()
        g.add_weighted_edges_from(zip(su.tolist(), sv.tolist(), sw.tolist()))
        value, (side, _) = nx.stoer_wagner(g, weight="weight")
        if value < 2 - CUT_EPS:
            mask = np.zeros(k, dtype=bool)
            mask[list(side)] = True
            found = [mask]
    return [mask[group] for mask in found]


def separate(n, eu, ev, x):
    """Violated subtour cuts of the LP solution x over edges (eu, ev), as bool masks over nodes:
    the connected components of the support graph when there are several, and the violated
    cuts found inside each component (a set inside a component is a subtour cut as well)."""
    sup = x > SUPPORT_EPS
    u, v, w = eu[sup], ev[sup], x[sup]
    graph = sparse.coo_matrix((w, (u, v)), shape=(n, n)).tocsr()
    ncomp, label = csgraph.connected_components(graph, directed=False)
    if ncomp == 1:
        return connected_cuts(n, u, v, w, confirm=True)
    cuts = []
    local = np.zeros(n, dtype=np.int64)
    for c in range(ncomp):
        members = np.flatnonzero(label == c)
        cuts.append(label == c)
        local[members] = np.arange(len(members))
        inside = label[u] == c
        for sub in connected_cuts(len(members), local[u[inside]], local[v[inside]], w[inside],
                                  confirm=False):
            mask = np.zeros(n, dtype=bool)
            mask[members[sub]] = True
            cuts.append(mask)
    return cuts


# ---------------------------------------------------------------------------- the LP

class SubtourLP:
    def __init__(self, dist):
        self.dist = dist
        self.n = len(dist)
        eu, ev = starting_edges(dist)
        self.eu = np.asarray(eu, dtype=np.int64)
        self.ev = np.asarray(ev, dtype=np.int64)
        self.in_lp = np.zeros((self.n, self.n), dtype=bool)
        self.in_lp[self.eu, self.ev] = True
        self.cuts = []  # bool masks over nodes, normalised to exclude node 0
        self.keys = []  # packed masks, to skip cuts already in the LP
        self.age = []  # solves in a row in which each cut was slack
        self.key_set = set()
        self.purge_level = -math.inf  # LP value at the last drop of slack cuts
        self.cuts_added = 0
        self.rounds = 0
        self.result = None
        self.scale = max(1.0, float(np.abs(dist).max()))  # tolerances of the dual checks

    def add_cut(self, mask):
        if mask[0]:
            mask = ~mask
        if not mask.any() or mask.all():
            return False
        key = np.packbits(mask).tobytes()
        if key in self.key_set:
            return False
        self.key_set.add(key)
        self.keys.append(key)
        self.cuts.append(mask)
        self.age.append(0)
        self.cuts_added += 1
        return True

    def purge(self):
        """Drop the cuts that have been slack for CUT_AGE_LIMIT solves in a row, so the LP stays
        small. The result stays exact: separation is exact, so the final LP solution satisfies
        every subtour constraint, dropped or not. Cuts are dropped only when the LP value has
        risen since the last drop: once no more edges enter, the value never falls (adding cuts
        cannot lower it, dropping slack ones keeps it), so drops stop and the loop cannot cycle."""
        if not self.cuts:
            return
        slack = np.asarray(self.result.ineqlin.residual) > CUT_EPS
        self.age = [a + 1 if s else 0 for a, s in zip(self.age, slack)]
        if self.result.fun <= self.purge_level + CUT_EPS:
            return
        self.purge_level = self.result.fun
        keep = [i for i, a in enumerate(self.age) if a < CUT_AGE_LIMIT]
        if len(keep) < len(self.cuts):
            self.cuts = [self.cuts[i] for i in keep]
            self.keys = [self.keys[i] for i in keep]
            self.age = [self.age[i] for i in keep]
            self.key_set = set(self.keys)

    def solve(self):
        n, m = self.n, len(self.eu)
        cols = np.arange(m)
        a_eq = sparse.csr_matrix((np.ones(2 * m), (np.concatenate([self.eu, self.ev]),
                                                   np.concatenate([cols, cols]))), shape=(n, m))
        a_ub = b_ub = None
        if self.cuts:
            rows, idx = [], []
            for start in range(0, len(self.cuts), 256):
                block = np.array(self.cuts[start:start + 256])
                r, c = np.nonzero(block[:, self.eu] != block[:, self.ev])
                rows.append(r + start)
                idx.append(c)
            rows, idx = np.concatenate(rows), np.concatenate(idx)
            a_ub = sparse.csr_matrix((-np.ones(len(rows)), (rows, idx)), shape=(len(self.cuts), m))
            b_ub = -2.0 * np.ones(len(self.cuts))
        cost = self.dist[self.eu, self.ev].astype(float)
        res = linprog(cost, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=2.0 * np.ones(n),
                      bounds=(0, 1), method="highs")
        self.rounds += 1
        if self.rounds > MAX_ROUNDS:
            raise RuntimeError(f"no convergence in {MAX_ROUNDS} LP solves")
        if res.status != 0:
            raise RuntimeError(f"LP solve failed: {res.message}")
        self.result = res
        return res

    def duals(self):
        """Degree duals y (free) and cut duals z >= 0 of the last solve, so that the reduced cost
        of edge uv is c_uv - y_u - y_v - sum of z_S over the cuts S separating u and v. linprog
        reports d(objective)/d(rhs); the cut rows are -x(delta(S)) <= -2, hence z = -marginal."""
        y = np.asarray(self.result.eqlin.marginals, dtype=float)
        if self.cuts:
            z = -np.asarray(self.result.ineqlin.marginals, dtype=float)
        else:
            z = np.zeros(0)
        return y, z

    def reduced_costs(self, u, v, y, z):
        rc = self.dist[u, v] - y[u] - y[v]
        for mask, zs in zip(self.cuts, z):
            if zs != 0:
                rc -= zs * (mask[u] != mask[v])
        return rc

    def check_duals(self, rc):
        """rc: reduced costs of the LP's edges. Fractional edges are basic, so theirs must be 0;
        edges at 0 must not be negative and edges at 1 not positive."""
        x = self.result.x
        frac = (x > 1e-7) & (x < 1 - 1e-7)
        bad = max(np.abs(rc[frac]).max(initial=0.0), -rc[x <= 1e-7].min(initial=0.0),
                  rc[x >= 1 - 1e-7].max(initial=0.0))
        if bad > DUAL_CHECK_EPS * self.scale:
            raise RuntimeError(f"dual check failed: reduced cost off by {bad:g}")

    def price(self):
        """Add the edges not in the LP whose reduced cost is below -PRICE_EPS (at most n of them,
        the most negative); return how many."""
        n = self.n
        y, z = self.duals()
        if np.any(z < -DUAL_CHECK_EPS * self.scale):
            raise RuntimeError("dual check failed: a cut dual is negative")
        rc_lp = self.reduced_costs(self.eu, self.ev, y, z)
        self.check_duals(rc_lp)
        if len(self.eu) == n * (n - 1) // 2:
            return 0
        active = np.flatnonzero(z > 0)
        masks = np.array([self.cuts[i] for i in active], dtype=float).reshape(len(active), n)
        za = z[active]
        a = masks.T @ za  # sum of z_S over the cuts containing each node
        weighted = masks.T * za  # n x k
        new_u, new_v, new_rc = [], [], []
        for start in range(0, n, PRICE_BLOCK):
            stop = min(n, start + PRICE_BLOCK)
            # z-weight of cuts separating u and v: a_u + a_v - 2 sum_S z_S [u in S][v in S]
            sep = a[start:stop, None] + a[None, :] - 2.0 * (weighted[start:stop] @ masks)
            rc = self.dist[start:stop] - y[start:stop, None] - y[None, :] - sep
            # the matrix form must agree with the edge-by-edge definition on the LP's edges
            here = (self.eu >= start) & (self.eu < stop)
            off = np.abs(rc[self.eu[here] - start, self.ev[here]] - rc_lp[here]).max(initial=0.0)
            if off > DUAL_CHECK_EPS * self.scale:
                raise RuntimeError(f"pricing check failed: reduced costs differ by {off:g}")
            rows = np.arange(start, stop)[:, None]
            cand = (rc < -PRICE_EPS) & (np.arange(n)[None, :] > rows) & ~self.in_lp[start:stop]
            r, c = np.nonzero(cand)
            new_u.append(r + start)
            new_v.append(c)
            new_rc.append(rc[r, c])
        new_u, new_v, new_rc = map(np.concatenate, (new_u, new_v, new_rc))
        if len(new_u) > n:  # the most negative ones first; the rest come back if still negative
            order = np.argsort(new_rc)[:n]
            new_u, new_v = new_u[order], new_v[order]
        self.eu = np.concatenate([self.eu, new_u])
        self.ev = np.concatenate([self.ev, new_v])
        self.in_lp[new_u, new_v] = True
        return len(new_u)

    def run(self):
        """Solve, price and separate until no edge prices out and no cut is violated. Pricing
        every round, not only once the cuts have converged, keeps the restricted edge set from
        forcing long detours on clustered instances."""
        while True:
            res = self.solve()
            columns = self.price()
            found = separate(self.n, self.eu[:len(res.x)], self.ev[:len(res.x)], res.x)
            if not columns and not found:
                return res.fun
            self.purge()
            for mask in found:
                self.add_cut(mask)


# ---------------------------------------------------------------------------- command line

def run_file(path):
    start = time.time()
    problem = tsplib95.load(path)
    kind = (problem.type or "").split()
    if not kind or kind[0].upper() != "TSP":
        raise ValueError(f"TYPE is {problem.type or 'missing'}, not TSP")
    nodes = list(problem.get_nodes())
    if len(nodes) < 3:
        raise ValueError("fewer than 3 nodes")
    dist = distance_matrix(problem, nodes)
    lp = SubtourLP(dist)
    value = lp.run()
    return {
        "instance": os.path.splitext(os.path.basename(path))[0],
        "nodes": len(nodes),
        "subtour_lp": round(float(value), 6),
        "subtour_lp_ceil": int(math.ceil(value - 1e-6)),
        "rounds": lp.rounds,
        "cuts": lp.cuts_added,
        "edges": len(lp.eu),
        "seconds": round(time.time() - start, 2),
    }


def main(argv):
    as_json = "--json" in argv
    files = [a for a in argv if a != "--json"]
    if not files or any(a.startswith("-") for a in files):
        sys.exit(__doc__)
    failed = False
    for path in files:
        try:
            r = run_file(path)
        except Exception as exc:  # report and carry on with the other files
            print(f"{path}: skipped: {exc}", file=sys.stderr)
            failed = True
            continue
        if as_json:
            print(json.dumps(r), flush=True)
        else:
            print(f"{r['instance']}  nodes {r['nodes']}  subtour LP {r['subtour_lp']:.3f}"
                  f"  (ceil {r['subtour_lp_ceil']})  rounds {r['rounds']}  cuts {r['cuts']}"
                  f"  edges {r['edges']}  {r['seconds']:.2f} s", flush=True)
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
