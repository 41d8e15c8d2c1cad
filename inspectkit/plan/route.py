"""The order of visits: a closed tour from the depot, nearest neighbour improved by 2-opt.

A tour is a list of indices into a distance matrix, starting at the depot
(index 0 unless said otherwise) and returning to it after the last entry.
"""

from __future__ import annotations

import heapq
from collections import deque
from collections.abc import Sequence
from itertools import permutations

Matrix = Sequence[Sequence[float]]

#: Candidate new edges tried per site in 2-opt: its nearest neighbours (our default).
#: Ten keeps a 500-site round well under a second with routes within a percent or two
#: of the full neighbourhood's.
NEIGHBOURS = 10
#: Improving moves allowed per site before 2-opt stops, a bound on the worst case;
#: real rounds settle far sooner (our default).
MOVES_PER_SITE = 50
#: Largest tour (depot included) the exhaustive search accepts: 9! / 2 orders.
BRUTE_FORCE_LIMIT = 10
#: Rounds of up to this many sites are ordered by exhaustive search, which is exact
#: and takes some 30 ms at 8 sites (8! / 2 orders); 2-opt is a local search
#: and misses the optimum now and then even on small rounds (our default).
EXACT_SITES = 8
#: Gains below this (km) are rounding, not improvement.
_EPS = 1e-9


def tour_length(tour: Sequence[int], dist: Matrix) -> float:
    """Length of the closed tour, the leg back to the start included."""
    if len(tour) < 2:
        return 0.0
    return sum(dist[a][b] for a, b in zip(tour, tour[1:], strict=False)) + dist[tour[-1]][tour[0]]


def nearest_neighbour(
    dist: Matrix, nodes: Sequence[int] | None = None, start: int = 0
) -> list[int]:
    """Greedy tour: from `start`, always on to the nearest node not yet visited.

    Args:
        dist: the distance matrix.
        nodes: the nodes to visit (all of the matrix by default); `start` is added.
        start: where the tour begins and ends.
    """
    left = set(range(len(dist)) if nodes is None else nodes)
    left.discard(start)
    tour = [start]
    here = start
    while left:
        here = min(left, key=lambda n: (dist[here][n], n))
        left.remove(here)
        tour.append(here)
    return tour


def two_opt(
    tour: Sequence[int],
    dist: Matrix,
    *,
    neighbours: int = NEIGHBOURS,
    moves_per_site: int = MOVES_PER_SITE,
) -> list[int]:
    """Improve a tour by 2-opt moves until none of those tried shortens it.

    First improvement over neighbour lists with don't-look bits: for each site only
    new edges to its `neighbours` nearest sites are tried, in both directions along
    the tour, and a site is looked at again only when one of its edges changed. That
    makes a pass near-linear instead of quadratic, so 500 sites take well under a
    second in pure Python; with `neighbours` ≥ the tour's size every 2-opt move is
    tried. Each move strictly shortens the tour, so the result is never longer than
    the input; it starts at the same node.
    """
    order = list(tour)
    n = len(order)
    if n < 4:
        return order
    pos = {node: i for i, node in enumerate(order)}
    near = {
        a: heapq.nsmallest(neighbours, (b for b in order if b != a), key=lambda b: dist[a][b])
        for a in order
    }

    def reverse(i: int, j: int) -> None:
        """Reverse the path from position i forward to position j (or its complement)."""
        length = (j - i) % n + 1
        if 2 * length > n:
            i, j, length = (j + 1) % n, (i - 1) % n, n - length
        for _ in range(length // 2):
            a, b = order[i], order[j]
            order[i], order[j] = b, a
            pos[a], pos[b] = j, i
            i, j = (i + 1) % n, (j - 1) % n

    def improve(a: int) -> tuple[int, ...] | None:
        """Apply the first improving move at `a`; the nodes whose edges changed."""
        for step in (1, -1):
            b = order[(pos[a] + step) % n]
            ab = dist[a][b]
            for c in near[a]:
                ac = dist[a][c]
                if ac >= ab - _EPS:
                    break
                d = order[(pos[c] + step) % n]
                if c == b or d == a:
                    continue
                if ac + dist[b][d] - ab - dist[c][d] < -_EPS:
                    if step == 1:
                        reverse(pos[b], pos[c])
                    else:
                        reverse(pos[a], pos[d])
                    return a, b, c, d
        return None

    queue = deque(order)
    queued = set(order)
    budget = moves_per_site * n
    while queue and budget > 0:
        a = queue.popleft()
        queued.discard(a)
        changed = improve(a)
        if changed is None:
            continue
        budget -= 1
        for node in changed:
            if node not in queued:
                queued.add(node)
                queue.append(node)
    start = order.index(tour[0])
    return order[start:] + order[:start]


def brute_force(dist: Matrix, start: int = 0) -> list[int]:
    """The shortest closed tour through every node, by trying every order.

    Used for small rounds, and to check the heuristics against.

    Raises:
        ValueError: more nodes than `BRUTE_FORCE_LIMIT`.
    """
    n = len(dist)
    if n > BRUTE_FORCE_LIMIT:
        raise ValueError(f"{n} nodes: the exhaustive search takes at most {BRUTE_FORCE_LIMIT}")
    rest = [i for i in range(n) if i != start]
    if len(rest) < 3:
        return [start, *rest]
    best_len, best = float("inf"), [start, *rest]
    row = dist[start]
    for perm in permutations(rest):
        if perm[0] > perm[-1]:
            continue  # the same cycle run backwards
        length = row[perm[0]] + row[perm[-1]]
        for a, b in zip(perm, perm[1:], strict=False):
            length += dist[a][b]
        if length < best_len - _EPS:
            best_len, best = length, [start, *perm]
    return best


def plan_route(dist: Matrix, start: int = 0) -> list[int]:
    """A good closed tour: the exact one for small rounds, else nearest neighbour then 2-opt."""
    if len(dist) <= EXACT_SITES + 1:
        return brute_force(dist, start)
    return two_opt(nearest_neighbour(dist, start=start), dist)
