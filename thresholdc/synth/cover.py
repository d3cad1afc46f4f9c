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
        self.n_root: dict = {}
        self.n_help: dict = {}
        self.total = 0
        # the nodes some option of which has each root function: a helper with such a key
        # is likely shared with that node's own neuron
        self.root_of: dict = {}
        for v, opts in enumerate(options):
            for o in opts:
                k = o.keys()[-1][0]
                if k is not None:
                    self.root_of.setdefault(k, set()).add(v)
        self.flow_cost = [[self._flow_cost(v, o) for o in opts] for v, opts in enumerate(options)]

    def _flow_cost(self, v: int, o: Option) -> float:
        """Neurons of ``o`` for area flow: a helper that another node's option has as its root
        counts half (it will often be shared)."""
        keys = o.keys()
        c = 0.0
        for i, (k, _) in enumerate(keys):
            if i < len(keys) - 1 and k is not None and self.root_of.get(k, set()) - {v}:
                c += 0.5
            else:
                c += 1.0
        return c

    def _shared(self, v: int, o: Option) -> int:
        """How many of ``o``'s helpers a needed node other than ``v`` could compute as its
        own neuron (a tie-break: the next pass can then share it)."""
        keys = o.keys()
        nref = self.nref
        return sum(1 for k, _ in keys[:-1] if k is not None
                   and any(u != v and nref[u] > 0 for u in self.root_of.get(k, ())))

    # -------------------------------------------------------------- key accounting
    def _add(self, o: Option) -> int:
        """Take ``o``'s neurons into the cover; return how many neurons that adds.

        A key's neurons are ``max(roots, 1 if helpers else 0)``."""
        keys = o.keys()
        added = 0
        last = len(keys) - 1
        n_root, n_help = self.n_root, self.n_help
        for i, (k, _) in enumerate(keys):
            if k is None:
                added += 1
            elif i == last:
                r = n_root.get(k, 0)
                n_root[k] = r + 1
                if r or not n_help.get(k, 0):
                    added += 1
            else:
                hc = n_help.get(k, 0)
                n_help[k] = hc + 1
                if not hc and not n_root.get(k, 0):
                    added += 1
        return added

    def _remove(self, o: Option) -> int:
        """Release ``o``'s neurons; return how many neurons that frees."""
        keys = o.keys()
        freed = 0
        last = len(keys) - 1
        n_root, n_help = self.n_root, self.n_help
        for i, (k, _) in enumerate(keys):
            if k is None:
                freed += 1
            elif i == last:
                r = n_root[k] - 1
                n_root[k] = r
                if r or not n_help.get(k, 0):
                    freed += 1
            else:
                hc = n_help[k] - 1
                n_help[k] = hc
                if not hc and not n_root.get(k, 0):
                    freed += 1
        return freed

    def _ref(self, v: int) -> int:
        """Node ``v`` becomes needed: take its option and, transitively, its leaves' options."""
        added = 0
        stack = [v]
        nref, gate, opts, choice = self.nref, self.gate, self.options, self.choice
        while stack:
            u = stack.pop()
            o = opts[u][choice[u]]
            added += self._add(o)
            for x in o.leaves:
                if nref[x] == 0 and gate[x]:
                    stack.append(x)
                nref[x] += 1
        return added

    def _deref(self, v: int) -> int:
        """Node ``v`` is no longer needed: release its option and what only it needed."""
        freed = 0
        stack = [v]
        nref, gate, opts, choice = self.nref, self.gate, self.options, self.choice
        while stack:
            u = stack.pop()
            o = opts[u][choice[u]]
            freed += self._remove(o)
            for x in o.leaves:
                nref[x] -= 1
                if nref[x] == 0 and gate[x]:
                    stack.append(x)
        return freed

    def _arrive(self, v: int, o: Option) -> int:
        return max((self.arrival[x] for x in o.leaves), default=0) + o.depth

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
        self.n_root = {}
        self.n_help = {}
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
            for i, o in enumerate(opts):
                self.choice[v] = i
                added = self._ref(v)
                self._deref(v)
                key = (added, self._arrive(v, o), -self._shared(v, o), i)
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
