"""Choosing one option per needed node: fewest neurons, then least depth.

Rules
    * A node is *needed* when an output reads it or a needed node's option has it as a leaf;
      inputs are free.  The cost of a cover is the number of distinct neurons: two specs with
      the same key (same leaves, same function up to complement) are one neuron, except that
      every needed node has its own root neuron (it carries that node's signal).
    * Start: area flow (common practice in cut-based mapping): the flow of an option is its
      neurons plus the flow of its leaves, shared among the node's readers; the least flow wins,
      ties go to the earliest arrival (depth).
    * Then exact area, a few passes in topological order: each needed node is released (with
      what only it needed), every option is tried by counting the neurons it would add given the
      rest of the cover (shared keys included), and the cheapest is kept, ties to the earliest
      arrival.  A pass never makes the cover worse.
    * Every walk is a loop with an explicit stack (no recursion on deep graphs); the order of
      every choice is fixed, so the same graph gives the same cover.

>>> from thresholdc.synth.candidates import Option
>>> from thresholdc.synth.gadgets import Spec
>>> one = Option((1, 2), (Spec((0, 1), (1, 1), 2),), 0b1000)
>>> c = Cover(4, [[], [], [], [one]], [3], [0, 0, 0, 0]); c.run(passes=1)
>>> c.choice[3], c.neurons()
(0, 1)
"""

from __future__ import annotations

from ..progress import track
from .candidates import Option

__all__ = ["Cover"]


class Cover:
    """The cover of a graph of ``N`` nodes with ``options[v]`` per node (empty for inputs),
    the needed roots ``roots`` and the structural fan-out of each node."""

    def __init__(self, N: int, options: list[list[Option]], roots: list[int],
                 fanout: list[int]) -> None:
        self.N = N
        self.options = options
        self.roots = sorted(set(roots))
        self.fanout = fanout
        self.gate = [bool(o) for o in options]
        self.choice = [0] * N
        self.nref = [0] * N
        self.arrival = [0] * N
        self.total = 0
        # keys interned as small integers (first seen, first numbered), and per option its
        # accounting: (specs without a key, helper key ids in spec order, root key id or -1)
        ids: dict = {}
        self.acct: list[list[tuple[int, tuple[int, ...], int]]] = []
        for opts in options:
            row = []
            for o in opts:
                keys = o.keys()
                last = len(keys) - 1
                none, helpers, root = 0, [], -1
                for i, (k, _) in enumerate(keys):
                    if k is None:
                        none += 1
                        continue
                    kid = ids.setdefault(k, len(ids))
                    if i == last:
                        root = kid
                    else:
                        helpers.append(kid)
                row.append((none, tuple(helpers), root))
            self.acct.append(row)
        self.n_root = [0] * len(ids)  # per key: roots in the cover with that key
        self.n_help = [0] * len(ids)  # per key: helper specs in the cover with that key
        # the nodes some option of which has each root function: a helper with such a key
        # is likely shared with that node's own neuron
        self.root_of: dict[int, set[int]] = {}
        for v, row in enumerate(self.acct):
            for _, _, root in row:
                if root >= 0:
                    self.root_of.setdefault(root, set()).add(v)
        self.flow_cost = [[self._flow_cost(v, a) for a in row]
                          for v, row in enumerate(self.acct)]

    def _flow_cost(self, v: int, a: tuple[int, tuple[int, ...], int]) -> float:
        """Neurons of an option (its accounting ``a``) for area flow: a helper that another
        node's option has as its root counts half (it will often be shared)."""
        none, helpers, root = a
        c = float(none) + (1.0 if root >= 0 else 0.0)
        for k in helpers:
            c += 0.5 if self.root_of.get(k, set()) - {v} else 1.0
        return c

    def _shared(self, v: int, i: int) -> int:
        """How many of option ``i``'s helpers a needed node other than ``v`` could compute as
        its own neuron (a tie-break: the next pass can then share it)."""
        nref = self.nref
        return sum(1 for k in self.acct[v][i][1]
                   if any(u != v and nref[u] > 0 for u in self.root_of.get(k, ())))

    # -------------------------------------------------------------- key accounting
    # A key's neurons are ``max(roots, 1 if helpers else 0)``; a spec without a key is one
    # neuron of its own.

    def _ref(self, v: int) -> int:
        """Node ``v`` becomes needed: take its option and, transitively, its leaves' options;
        return how many neurons that adds."""
        added = 0
        stack = [v]
        nref, gate, opts, choice, acct = self.nref, self.gate, self.options, self.choice, self.acct
        n_root, n_help = self.n_root, self.n_help
        while stack:
            u = stack.pop()
            i = choice[u]
            none, helpers, root = acct[u][i]
            added += none
            for k in helpers:
                hc = n_help[k]
                n_help[k] = hc + 1
                if not hc and not n_root[k]:
                    added += 1
            if root >= 0:
                r = n_root[root]
                n_root[root] = r + 1
                if r or not n_help[root]:
                    added += 1
            for x in opts[u][i].leaves:
                if nref[x] == 0 and gate[x]:
                    stack.append(x)
                nref[x] += 1
        return added

    def _own_added(self, a: tuple[int, tuple[int, ...], int]) -> int:
        """The neurons an option's own specs (accounting ``a``) would add to the current cover,
        its leaves' options not counted: what :meth:`_ref` adds at its first step."""
        none, helpers, root = a
        n_root, n_help = self.n_root, self.n_help
        added = none
        seen: dict[int, int] = {}
        for k in helpers:
            hc = n_help[k] + seen.get(k, 0)
            seen[k] = seen.get(k, 0) + 1
            if not hc and not n_root[k]:
                added += 1
        if root >= 0 and (n_root[root] or not n_help[root] + seen.get(root, 0)):
            added += 1
        return added

    def _deref(self, v: int) -> int:
        """Node ``v`` is no longer needed: release its option and what only it needed; return
        how many neurons that frees."""
        freed = 0
        stack = [v]
        nref, gate, opts, choice, acct = self.nref, self.gate, self.options, self.choice, self.acct
        n_root, n_help = self.n_root, self.n_help
        while stack:
            u = stack.pop()
            i = choice[u]
            none, helpers, root = acct[u][i]
            freed += none
            for k in helpers:
                hc = n_help[k] - 1
                n_help[k] = hc
                if not hc and not n_root[k]:
                    freed += 1
            if root >= 0:
                r = n_root[root] - 1
                n_root[root] = r
                if r or not n_help[root]:
                    freed += 1
            for x in opts[u][i].leaves:
                nref[x] -= 1
                if nref[x] == 0 and gate[x]:
                    stack.append(x)
        return freed

    def _arrive(self, v: int, o: Option) -> int:
        arrival = self.arrival
        m = 0  # arrivals are never negative
        for x in o.leaves:
            a = arrival[x]
            if a > m:
                m = a
        return m + o.depth

    # -------------------------------------------------------------- passes
    def _area_flow(self, refs: list[float]) -> None:
        """Choose by area flow with the estimated references ``refs``."""
        flow = [0.0] * self.N
        for v in range(self.N):
            opts = self.options[v]
            if not opts:
                continue
            best = None
            costs = self.flow_cost[v]
            for i, o in enumerate(opts):
                f = costs[i] + sum(flow[x] for x in o.leaves)
                key = (f, self._arrive(v, o), i)
                if best is None or key < best:
                    best = key
            assert best is not None
            self.choice[v] = best[2]
            self.arrival[v] = best[1]
            flow[v] = best[0] / max(1.0, refs[v])

    def _map(self) -> None:
        """Reference the roots with the current choices (from an empty cover)."""
        self.nref = [0] * self.N
        self.n_root = [0] * len(self.n_root)
        self.n_help = [0] * len(self.n_help)
        self.total = 0
        for r in self.roots:
            if self.gate[r]:
                if self.nref[r] == 0:
                    self.total += self._ref(r)
            self.nref[r] += 1

    def _exact_pass(self) -> None:
        """One pass of exact-area improvement in topological order."""
        for v in track(range(self.N), "synthesis: cover", unit="node"):
            opts = self.options[v]
            if not opts:
                continue
            if self.nref[v] == 0 or len(opts) == 1:
                self.arrival[v] = self._arrive(v, opts[self.choice[v]])
                continue
            refs = self.nref[v]
            self.nref[v] = 0
            freed = self._deref(v)
            best = None
            acct = self.acct[v]
            for i, o in enumerate(opts):
                # an option adds at least its own new neurons; one that cannot tie the best
                # count so far cannot win (the count is the first key), so it is not walked
                if best is not None and self._own_added(acct[i]) > best[0]:
                    continue
                self.choice[v] = i
                added = self._ref(v)
                self._deref(v)
                key = (added, self._arrive(v, o), -self._shared(v, i), i)
                if best is None or key < best:
                    best = key
            assert best is not None
            self.choice[v] = best[-1]
            self.total += self._ref(v) - freed
            self.nref[v] = refs
            self.arrival[v] = best[1]

    def run(self, passes: int = 3) -> None:
        """Area flow (twice, the second with the first cover's references), then ``passes``
        exact-area passes."""
        refs = [float(max(1, f)) for f in self.fanout]
        self._area_flow(refs)
        self._map()
        blended = [(2.0 * max(1, self.nref[v]) + refs[v]) / 3.0 for v in range(self.N)]
        self._area_flow(blended)
        self._map()
        for _ in range(passes):
            before = self.total
            self._exact_pass()
            if self.total >= before:
                break

    def neurons(self) -> int:
        """The number of neurons of the current cover."""
        return self.total

    def needed(self) -> list[int]:
        """The needed nodes, in topological order."""
        return [v for v in range(self.N) if self.gate[v] and self.nref[v] > 0]
