#!/usr/bin/env python3
"""Re-check a pleat-bundle/1 proof of a functional dimension, trusting no pleat code.

    python3 scripts/check_bundle.py [--network NET.json] proof.json [more.json ...]

Standard library only (fractions, json, os, re, sys; the JSON reading is exact_json.py
beside it); every number is an exact Fraction.
From the bundled network alone it recomputes, for each listed region, the
region's cell (from its activation pattern) and its coefficient-block rows;
then it checks:
  lower bound   the bundled minor rows are those rows, and the minor is nonsingular;
  upper bound   "scaling": D minus the rank of the hidden neurons' scaling
                directions (each is orthogonal to every Jacobian row: rescaling
                a ReLU neuron leaves the network's function unchanged);
                "kernel": the kernel vectors are independent and annihilate the
                rows of every smooth region, and the region list is complete:
                each region's point is strictly inside its cell, each
                constraint is a facet (a point) or not (Motzkin multipliers),
                and every region that crossing a facet at its point can reach
                is listed or proved empty there (Gordan multipliers); the
                domain is connected, so a non-empty such list is every region.
--network NET.json: the bundle's own network must be that file's (every weight
and bias equal); an ONNX model is refused, naming 'pleat import' that writes its JSON. The report names the domain the value holds on.
Exit status: 0 every proof checks, 1 one does not (its first failure is
printed), 2 a file cannot be read. The format: docs/formats.md.
"""

import os
import sys
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # exact_json.py beside it, however loaded
from exact_json import Rejected, load, number, numbers  # noqa: E402  (standard library only, too)


def dot(a, b):
    return sum((x * y for x, y in zip(a, b)), Fraction(0))


def matmul(a, b):
    return [[dot(row, col) for col in zip(*b)] for row in a]


def rank(rows):
    """Exact rank by Gaussian elimination over Q."""
    rows = [list(r) for r in rows]
    r = 0
    for c in range(len(rows[0]) if rows else 0):
        pivot = next((i for i in range(r, len(rows)) if rows[i][c] != 0), None)
        if pivot is None:
            continue
        rows[r], rows[pivot] = rows[pivot], rows[r]
        for i in range(r + 1, len(rows)):
            if rows[i][c] != 0:
                f = rows[i][c] / rows[r][c]
                rows[i] = [x - f * y for x, y in zip(rows[i], rows[r])]
        r += 1
    return r


class Network:
    """A pleat-network/1 document under pleat's reader's rules: a key pleat refuses (one
    unknown, a hidden layer not "relu") would make it mean another function than the one checked."""

    def __init__(self, doc, where="network"):
        if not isinstance(doc, dict) or doc.get("format") != "pleat-network/1":
            raise Rejected(f"{where}: not a pleat-network/1 document")
        unknown = set(doc) - {"format", "input_dim", "layers", "name", "meta"}
        if unknown:
            raise Rejected(f"{where}: unknown key {sorted(unknown)[0]!r} (pleat refuses it)")
        self.n0 = doc.get("input_dim")
        if not isinstance(self.n0, int) or isinstance(self.n0, bool) or self.n0 < 1:
            raise Rejected(f"{where}.input_dim: expected a positive integer")
        self.W, self.b, self.widths = [], [], [self.n0]
        layers = doc.get("layers")
        if not isinstance(layers, list) or not layers:
            raise Rejected(f"{where}.layers: expected a non-empty list of layers")
        self.activations = []
        for k, layer in enumerate(layers):
            here = f"{where}.layers[{k}]"
            if not isinstance(layer, dict) or set(layer) - {"weights", "bias", "activation"}:
                raise Rejected(f"{here}: a layer has weights, bias and activation only")
            is_last = k + 1 == len(layers)
            activation = layer.get("activation", "linear" if is_last else "relu")
            if activation not in ("relu", "linear") or (activation == "linear" and not is_last):
                raise Rejected(f"{here}.activation: {activation!r}; pleat-network/1 has \"relu\" layers and "
                               "a \"relu\" or \"linear\" last layer")
            self.activations.append(activation)
            fan_in = self.widths[-1]
            if not isinstance(layer.get("weights"), list) or not layer["weights"]:
                raise Rejected(f"{here}.weights: expected a non-empty list of rows")
            self.W.append([numbers(row, fan_in, f"{here}.weights[{i}]") for i, row in enumerate(layer["weights"])])
            self.b.append(numbers(layer.get("bias"), len(layer["weights"]), f"{here}.bias"))
            self.widths.append(len(layer["weights"]))
        self.output_relu = self.activations[-1] == "relu"
        self.relu_layers = len(layers) - (0 if self.output_relu else 1)
        self.nd = self.widths[-1]
        self.offsets = []  # parameter index of W_k[0][0]; W_k row-major, then b_k
        total = 0
        for k in range(len(layers)):
            self.offsets.append(total)
            total += (self.widths[k] + 1) * self.widths[k + 1]
        self.D = total

    def parse_pattern(self, text, where):
        groups = text.split("|") if isinstance(text, str) else None
        if groups is None or [len(g) for g in groups] != self.widths[1:self.relu_layers + 1] or \
                any(ch not in "01z" for g in groups for ch in g):
            raise Rejected(f"{where}: {text!r} is not a pattern of this network")
        return tuple("".join(groups))

    def states_of_layer(self, pattern, k):
        first = sum(self.widths[1:k + 1])
        return pattern[first:first + self.widths[k + 1]]

    def forward_maps(self, pattern, layers=None):
        """Per layer k: the pre-activation (L, c) as an affine map of x on the
        pattern, and the input (P, p) of layer k; finally the output map."""
        P = [[Fraction(int(i == j)) for j in range(self.n0)] for i in range(self.n0)]
        p = [Fraction(0)] * self.n0
        pre, inputs = [], []
        for k in range(len(self.W) if layers is None else layers):
            inputs.append((P, p))
            L = matmul(self.W[k], P)
            c = [dot(row, p) + bias for row, bias in zip(self.W[k], self.b[k])]
            pre.append((L, c))
            if k < self.relu_layers:
                states = self.states_of_layer(pattern, k)
                P = [row if s == "1" else [Fraction(0)] * self.n0 for row, s in zip(L, states)]
                p = [v if s == "1" else Fraction(0) for v, s in zip(c, states)]
            else:
                P, p = L, c
        return pre, inputs, (P, p)

    def cell(self, pattern, domain):
        """(constraints, neuron id or None per constraint) of the pattern's
        open cell, or None when the pattern contradicts its own maps."""
        pre, _, _ = self.forward_maps(pattern)
        constraints, owners, neuron = [], [], 0
        for k in range(self.relu_layers):
            L, c = pre[k]
            for i, state in enumerate(self.states_of_layer(pattern, k)):
                zero_row = all(v == 0 for v in L[i])
                if state == "z" or (zero_row and c[i] == 0):
                    if not (state == "z" and zero_row and c[i] == 0):
                        return None
                elif zero_row:
                    if (c[i] if state == "1" else -c[i]) <= 0:
                        return None
                else:
                    sign = 1 if state == "1" else -1
                    constraints.append(([sign * v for v in L[i]], sign * c[i]))
                    owners.append(neuron)
                neuron += 1
        constraints += domain
        owners += [None] * len(domain)
        return constraints, owners

    def backward(self, pattern):
        """G[k] = dF/dz_k on the pattern (nd x n_k) and the signals
        S[k] = G[k+1] W[k+1] each neuron of hidden layer k would pass on."""
        layers = len(self.W)
        eye = [[Fraction(int(i == j)) for j in range(self.nd)] for i in range(self.nd)]
        G = [None] * layers
        S = [None] * layers
        if self.output_relu:
            out = self.states_of_layer(pattern, layers - 1)
            G[-1] = [[v if out[j] == "1" else Fraction(0) for j, v in enumerate(row)] for row in eye]
        else:
            G[-1] = eye
        for k in range(layers - 2, -1, -1):
            S[k] = matmul(G[k + 1], self.W[k + 1])
            states = self.states_of_layer(pattern, k)
            G[k] = [[v if states[i] == "1" else Fraction(0) for i, v in enumerate(row)] for row in S[k]]
        return G, S

    def is_smooth(self, pattern):
        """No 'z' neuron whose output still matters (a nonzero backward signal)."""
        _, S = self.backward(pattern)
        for k in range(self.relu_layers):
            for i, state in enumerate(self.states_of_layer(pattern, k)):
                if state == "z" and (k == len(self.W) - 1 or any(row[i] != 0 for row in S[k])):
                    return False
        return True

    def coefficient_blocks(self, pattern):
        """Rows d c_o / d theta (row o (n0+1)) and d A[o,t] / d theta (row
        o (n0+1) + 1 + t) of F = A x + c on the pattern, in parameter order."""
        _, inputs, _ = self.forward_maps(pattern)
        G, _ = self.backward(pattern)
        n0 = self.n0
        rows = [[Fraction(0)] * self.D for _ in range(self.nd * (n0 + 1))]
        for k, (P, p) in enumerate(inputs):
            fan_in, width, base = self.widths[k], self.widths[k + 1], self.offsets[k]
            for o in range(self.nd):
                for i in range(width):
                    g = G[k][o][i]
                    if g == 0:
                        continue
                    for j in range(fan_in):
                        rows[o * (n0 + 1)][base + i * fan_in + j] = g * p[j]
                        for t in range(n0):
                            rows[o * (n0 + 1) + 1 + t][base + i * fan_in + j] = g * P[j][t]
                    rows[o * (n0 + 1)][base + width * fan_in + i] = g
        return rows

    def scaling_directions(self):
        """Per hidden neuron: (+incoming weights, +bias, -outgoing weights)."""
        out = []
        for k in range(len(self.W) - 1):
            fan_in, width, base, above = self.widths[k], self.widths[k + 1], self.offsets[k], self.offsets[k + 1]
            for i in range(width):
                v = [Fraction(0)] * self.D
                for j in range(fan_in):
                    v[base + i * fan_in + j] = self.W[k][i][j]
                v[base + width * fan_in + i] = self.b[k][i]
                for r in range(self.widths[k + 2]):
                    v[above + r * width + i] = -self.W[k + 1][r][i]
                out.append(v)
        return out

    def patterns_across(self, near, q, normal):
        """Every pattern next to q on the far side of a facet with this normal
        (the near region lies on normal . x + offset > 0): neurons nonzero at q
        keep their sign; one that vanishes there gets its far-side state layer
        by layer from the far side's own map: 'z' when it is identically 0, the
        sign of its slope across the facet when parallel to it, both otherwise."""
        pre_near, _, _ = self.forward_maps(near)
        values = [[dot(row, q) + c for row, c in zip(L, cs)] for L, cs in pre_near]
        direction = [-v for v in normal]
        out = set()

        def extend(k, pattern):
            if k == self.relu_layers:
                out.add(tuple(pattern))
                return
            L, _ = self.forward_maps(pattern, k + 1)[0][k]
            first = sum(self.widths[1:k + 1])
            transversal = []
            for i, v in enumerate(values[k]):
                if v != 0:
                    pattern[first + i] = "1" if v > 0 else "0"
                elif all(x == 0 for x in L[i]):
                    pattern[first + i] = "z"
                elif rank([L[i], normal]) == 1:
                    pattern[first + i] = "1" if dot(L[i], direction) > 0 else "0"
                else:
                    transversal.append(i)
            for mask in range(1 << len(transversal)):
                for bit, i in enumerate(transversal):
                    pattern[first + i] = "1" if (mask >> bit) & 1 else "0"
                extend(k + 1, pattern)

        extend(0, list(near))
        return sorted(out)


def domain_constraints(domain, n0):
    """The domain's open half-spaces (normal, offset). A box has one interval
    per input, lower below upper (as pleat writes it)."""
    if domain == f"R^{n0}":
        return []
    if isinstance(domain, dict) and set(domain) == {"box"}:
        box = domain["box"]
        if not isinstance(box, list) or len(box) != n0:
            raise Rejected(f"domain: a box needs {n0} intervals, one per input")
        sides = []
        for axis, interval in enumerate(box):
            lo, hi = numbers(interval, 2, f"domain.box[{axis}]")
            if not lo < hi:
                raise Rejected(f"domain.box[{axis}]: the lower end {lo} is not below the upper end {hi}")
            e = [Fraction(int(i == axis)) for i in range(n0)]
            sides.append((e, -lo))
            sides.append(([-v for v in e], hi))
        return sides
    if isinstance(domain, dict) and set(domain) == {"format", "input_dim", "constraints"} and \
            domain["format"] == "pleat-domain/1" and domain["input_dim"] == n0:
        return [(numbers(c["normal"], n0, f"domain.constraints[{i}].normal"),
                 number(c["offset"], f"domain.constraints[{i}].offset")) for i, c in enumerate(domain["constraints"])]
    raise Rejected(f"domain: {domain!r} is not a domain of a {n0}-input network")


def describe_domain(domain):
    """The checked domain in words, for the report (numbers as Fractions)."""
    if isinstance(domain, str):
        return domain
    if "box" in domain:
        return "box " + "x".join(f"({number(lo, '')},{number(hi, '')})" for lo, hi in domain["box"])
    return f"the bundle's polytope of {len(domain['constraints'])} half-spaces"


def slack(constraint, x):
    return dot(constraint[0], x) + constraint[1]


def is_positive_multiple(a, b):
    ratios = {x / y if y != 0 else None for x, y in zip(a[0] + [a[1]], b[0] + [b[1]]) if x != 0 or y != 0}
    return len(ratios) == 1 and None not in ratios and next(iter(ratios)) > 0


def check_classification(cell, cert, where):
    """The constraints' groups (positive multiples of their first) partition the
    cell; each is a facet (a point where the group is 0 and the rest > 0) or
    not (Motzkin: free y on the group's first row, y >= 0 on the rest, zero on
    the group, not all zero, with sum y a = 0 and sum y c <= 0). Returns the
    facet groups with their points, in group order."""
    constraints, _ = cell
    n = len(constraints)
    groups = [(g["constraints"], "facet", g) for g in cert["facet_points"]] + \
             [(g["constraints"], "non-facet", g) for g in cert["non_facets"]]
    covered = sorted(i for members, _, _ in groups for i in members)
    if covered != list(range(n)):
        raise Rejected(f"{where}: the certificate's groups do not partition the {n} constraints of the cell")
    representatives = []
    for members, kind, g in sorted(groups, key=lambda group: group[0][0]):
        if members != sorted(members) or any(not is_positive_multiple(constraints[m], constraints[members[0]])
                                             for m in members):
            raise Rejected(f"{where}: group {members} is not a class of positive multiples")
        if any(is_positive_multiple(constraints[members[0]], constraints[r]) for r in representatives):
            raise Rejected(f"{where}: group {members} repeats another group's half-space")
        representatives.append(members[0])
        if kind == "facet":
            q = numbers(g["point"], len(constraints[0][0]), f"{where}: facet point")
            if any((slack(constraints[i], q) == 0) != (i in members) or slack(constraints[i], q) < 0
                   for i in range(n)):
                raise Rejected(f"{where}: the facet point of group {members} does not check")
        else:
            y = [Fraction(0)] * n
            for index, value in g["multipliers"].items():
                y[int(index)] = number(value, where)
            lam = number(g["equality_multiplier"], where)
            if any(y[m] != 0 for m in members) or any(v < 0 for v in y) or all(v == 0 for v in y):
                raise Rejected(f"{where}: the non-facet multipliers of group {members} have a wrong sign")
            rep = constraints[members[0]]
            dim = len(rep[0])
            normal = [lam * rep[0][t] + sum(y[i] * constraints[i][0][t] for i in range(n)) for t in range(dim)]
            offset = lam * rep[1] + sum(y[i] * constraints[i][1] for i in range(n))
            if any(v != 0 for v in normal) or offset > 0:
                raise Rejected(f"{where}: the non-facet certificate of group {members} does not check")
    facet_groups = sorted(((g["constraints"], g) for g in cert["facet_points"]), key=lambda fg: fg[0][0])
    return [(members, numbers(g["point"], len(constraints[0][0]), where)) for members, g in facet_groups]


def check_empty_across(net, domain, candidate, q, multipliers, where):
    """A candidate region next to q has no interior there: Gordan multipliers
    y >= 0, not all zero, over the constraints of its cell that vanish at q
    (in cell order), with sum y a = 0 (no direction enters all of them)."""
    label = "|".join("".join(net.states_of_layer(candidate, k)) for k in range(net.relu_layers))
    far = net.cell(candidate, domain)
    if far is None or any(slack(c, q) < 0 for c in far[0]):
        raise Rejected(f"{where}: {label} is claimed empty, but it is no cell or does not hold the facet point")
    cone = [c[0] for c in far[0] if slack(c, q) == 0]
    y = numbers(multipliers, len(cone), f"{where}: the multipliers for {label}")
    if any(v < 0 for v in y) or all(v == 0 for v in y) or \
            any(sum(v * a[t] for v, a in zip(y, cone)) != 0 for t in range(net.n0)):
        raise Rejected(f"{where}: the proof that {label} is empty next to the facet point does not check")


def check_crossings(net, domain, index, region, pattern, cell, facet_groups, listed):
    """Every region next to an interior facet point on the far side is in the
    list, or its cell is empty there (checked Gordan multipliers). Every
    empty_across claim is checked, needed or not.

    At a facet point (only the facet's group vanishes) the far side is one
    pattern: by induction over the layers, a neuron that vanishes there has a
    far-side map equal to its near one plus a multiple of the facet's affine
    function, and its near map is 0 or such a multiple (it would be a tight
    constraint), so it is 'z' or parallel, never transversal. Bundles from
    pleat therefore carry no empty_across; the check stays general."""
    constraints, owners = cell
    facets = region.get("facets", [])
    if len(facets) != len(facet_groups):
        raise Rejected(f"region {index}: {len(facets)} facets listed, {len(facet_groups)} certified")
    for f, ((members, q), facet) in enumerate(zip(facet_groups, facets)):
        claims = facet.get("empty_across", [])
        where = f"region {index} facet {f}"
        if any(owners[m] is None for m in members):
            if claims:
                raise Rejected(f"{where}: empty_across on the domain's boundary, where nothing lies across")
            continue  # on the domain's boundary: nothing lies across
        candidates = net.patterns_across(pattern, q, constraints[members[0]][0])
        proofs = {}
        for claim in claims:
            claimed = net.parse_pattern(claim["pattern"], f"{where} empty_across")
            if claimed not in candidates:
                raise Rejected(f"{where}: empty_across names {claim['pattern']}, which crossing at the facet "
                               "point cannot reach")
            check_empty_across(net, domain, claimed, q, claim["multipliers"], where)
            proofs[claimed] = claim
        for candidate in candidates:
            if candidate in listed or candidate == pattern or candidate in proofs:
                continue
            far = net.cell(candidate, domain)
            if far is None or any(slack(c, q) < 0 for c in far[0]):
                continue  # not a cell, or the facet point is outside its closure
            label = "|".join("".join(net.states_of_layer(candidate, k)) for k in range(net.relu_layers))
            raise Rejected(f"region {index} ({region['pattern']}): region {label} lies across its facet {f} "
                           f"at the facet point but is not in the list: the list is incomplete")


def only_keys(doc, allowed, where):
    """A key this checker does not know is refused, not skipped: a bundle could
    claim something there (a larger domain, another value) that a reader of
    CHECKED would take as checked."""
    if not isinstance(doc, dict):
        raise Rejected(f"{where}: expected an object")
    unknown = sorted(set(doc) - set(allowed))
    if unknown:
        raise Rejected(f"{where}: unknown key{'s' if len(unknown) > 1 else ''} " +
                       ", ".join(repr(k) for k in unknown) + " (not checked; pleat writes " +
                       ", ".join(allowed) + ")")


BUNDLE_KEYS = ("format", "network", "domain", "parametric_dimension", "functional_dimension", "every_region",
               "lower_bound", "upper_bound", "regions")


def check(bundle, reference=None):
    """reference: (path, Network) that the bundle's network must equal, or None."""
    if not isinstance(bundle, dict) or bundle.get("format") != "pleat-bundle/1":
        raise Rejected("not a pleat-bundle/1 document")
    only_keys(bundle, BUNDLE_KEYS, "the bundle")
    only_keys(bundle["lower_bound"], ("rows", "columns"), "lower_bound")
    for n, row in enumerate(bundle["lower_bound"]["rows"]):
        only_keys(row, ("region", "block_row", "values"), f"lower_bound.rows[{n}]")
    only_keys(bundle["upper_bound"], ("method", "kernel") if bundle["upper_bound"].get("method") == "kernel"
              else ("method",), "upper_bound")
    net = Network(bundle["network"])
    if reference is not None:
        difference = same_network(net, reference[1])
        if difference is not None:
            raise Rejected(f"the bundle's network is not the one in {reference[0]}: {difference}")
    domain = domain_constraints(bundle["domain"], net.n0)
    value = bundle["functional_dimension"]
    if not isinstance(value, int) or isinstance(value, bool) or value < 0:
        raise Rejected(f"functional_dimension: expected a count, found {value!r}")
    if not isinstance(bundle["every_region"], bool):
        raise Rejected("every_region: expected true or false")
    if bundle["parametric_dimension"] != net.D:
        raise Rejected(f"parametric_dimension {bundle['parametric_dimension']} but the network has {net.D} parameters")
    every_region = bundle["every_region"] is True
    regions = bundle["regions"]
    if every_region and not regions:
        # Crossing-closed is complete only from a first region: an empty list
        # is closed too, and its kernel would be any D vectors (value 0).
        raise Rejected("every_region: the list is empty, but the domain holds at least one region")
    patterns = [net.parse_pattern(r["pattern"], f"region {i}") for i, r in enumerate(regions)]
    listed = set(patterns)
    if len(listed) != len(patterns):
        raise Rejected("a pattern is listed twice")
    smooth = []
    for i, (region, pattern) in enumerate(zip(regions, patterns)):
        cell = net.cell(pattern, domain)
        if cell is None:
            raise Rejected(f"region {i}: the pattern {region['pattern']} contradicts the network's own maps")
        point = numbers(region["point"], net.n0, f"region {i}: point")
        if any(slack(c, point) <= 0 for c in cell[0]):
            raise Rejected(f"region {i}: the point is not strictly inside the region {region['pattern']} "
                           "and the domain")
        smooth.append(net.is_smooth(pattern))
        if every_region:
            if "certificate" not in region:
                raise Rejected(f"region {i}: no certificate")
            facet_groups = check_classification(cell, region["certificate"], f"region {i}")
            check_crossings(net, domain, i, region, pattern, cell, facet_groups, listed)

    # Lower bound: a value x value minor of the listed regions' rows.
    minor = bundle["lower_bound"]
    columns = minor["columns"]
    if len(minor["rows"]) != value or len(columns) != value or len(set(columns)) != value or \
            any(not isinstance(c, int) or not 0 <= c < net.D for c in columns):
        raise Rejected(f"lower bound: the minor is not {value} x {value} (distinct columns below {net.D})")
    blocks = {}
    selected = []
    for n, row in enumerate(minor["rows"]):
        r, b = row["region"], row["block_row"]
        if not (isinstance(r, int) and 0 <= r < len(regions)) or not smooth[r]:
            raise Rejected(f"lower bound: minor row {n} names no smooth listed region")
        if r not in blocks:
            blocks[r] = net.coefficient_blocks(patterns[r])
        if not (isinstance(b, int) and 0 <= b < len(blocks[r])):
            raise Rejected(f"lower bound: minor row {n}: block row {b} does not exist")
        if numbers(row["values"], net.D, f"lower bound: minor row {n}") != blocks[r][b]:
            raise Rejected(f"lower bound: minor row {n} differs from row {b} of region {r}'s coefficient blocks "
                           "recomputed from the network")
        selected.append([blocks[r][b][c] for c in columns])
    if rank(selected) != value:
        raise Rejected(f"lower bound: the {value} x {value} minor is singular")

    # Upper bound.
    upper = bundle["upper_bound"]
    if upper["method"] == "scaling":
        s = rank(net.scaling_directions())
        if net.D - s != value:
            raise Rejected(f"upper bound: D - rank(scaling directions) = {net.D} - {s} = {net.D - s}, not {value}")
        how = f"{net.D} parameters minus the rank {s} of the hidden neurons' scaling directions"
    elif upper["method"] == "kernel":
        if not every_region:
            raise Rejected("upper bound: a kernel needs every region (every_region is false)")
        kernel = [numbers(v, net.D, f"upper bound: kernel vector {n}") for n, v in enumerate(upper["kernel"])]
        if len(kernel) != net.D - value or rank(kernel) != len(kernel):
            raise Rejected(f"upper bound: the kernel does not hold {net.D - value} independent vectors")
        for i, pattern in enumerate(patterns):
            if not smooth[i]:
                continue
            rows = blocks.get(i) or net.coefficient_blocks(pattern)
            for n, vector in enumerate(kernel):
                for b, row in enumerate(rows):
                    if dot(row, vector) != 0:
                        raise Rejected(f"upper bound: kernel vector {n} is not orthogonal to row {b} of region {i} "
                                       f"({regions[i]['pattern']})")
        how = f"an exact kernel of {len(kernel)} vectors annihilates the rows of all {sum(smooth)} smooth regions"
    else:
        raise Rejected(f"upper bound: unknown method {upper['method']!r}")
    return net, value, len(regions), every_region, how


def same_network(net, reference):
    """None when the networks are one (widths, activations, every weight and
    bias equal), else their first difference."""
    if (net.widths, net.activations) != (reference.widths, reference.activations):
        return f"layers {net.widths} {net.activations} against {reference.widths} {reference.activations}"
    for k, (W, V, b, c) in enumerate(zip(net.W, reference.W, net.b, reference.b)):
        entries = [(f"weights[{i}][{j}]", x, y) for i in range(len(W)) for j, (x, y) in enumerate(zip(W[i], V[i]))]
        for place, x, y in entries + [(f"bias[{i}]", x, y) for i, (x, y) in enumerate(zip(b, c))]:
            if x != y:
                return f"layers[{k}].{place} is {x} in the bundle, {y} in the file"
    return None


def check_file(path, reference=None):
    try:
        bundle = load(path)
    except (OSError, ValueError, RecursionError) as fault:
        print(f"check_bundle: {path}: cannot read ({fault})", file=sys.stderr)
        return 2
    try:
        net, value, count, every_region, how = check(bundle, reference)
    except Rejected as failure:
        print(f"REJECTED {path}: {failure}")
        return 1
    except (KeyError, TypeError, ValueError, IndexError, AttributeError) as fault:
        print(f"REJECTED {path}: malformed bundle ({type(fault).__name__}: {fault})")
        return 1
    print(f"network      {' -> '.join(map(str, net.widths))}, D = {net.D}" +
          (f", equal to {reference[0]} (every weight and bias)" if reference is not None else ""))
    print(f"domain       {describe_domain(bundle['domain'])}")
    print(f"regions      {count} listed, every point strictly inside its region and the domain" +
          (", the list complete (facets and crossings checked)" if every_region else ""))
    print(f"lower bound  {value}: a nonsingular {value} x {value} minor of their coefficient-block rows")
    print(f"upper bound  {value}: {how}")
    print(f"CHECKED {path}: functional dimension {value}")
    return 0


def read_reference(path):
    """--network FILE: the pleat-network/1 file the bundles must hold."""
    try:
        return path, Network(load(path), path)
    except (OSError, ValueError, RecursionError) as fault:
        print(f"check_bundle: {path}: cannot read ({fault})", file=sys.stderr)
    except Rejected as fault:
        print(f"check_bundle: {fault}", file=sys.stderr)
    return None


def main(argv):
    arguments, reference = argv[1:], None
    if len(arguments) >= 2 and arguments[0] == "--network":
        reference = read_reference(arguments[1])
        if reference is None:
            return 2
        arguments = arguments[2:]
    if not arguments:
        print("usage: check_bundle.py [--network NET.json] BUNDLE.json [MORE.json ...]", file=sys.stderr)
        return 2
    return max(check_file(path, reference) for path in arguments)


if __name__ == "__main__":
    sys.exit(main(sys.argv))
