#!/usr/bin/env bash
# pleat random: pinned output (golden files), -o, --sample, and an independent
# re-derivation of every parameter from the generator's documented recipe
# (core/random_network.hpp) in Python's decimal module, no MPFR involved.
set -u
source "$(dirname "$0")/lib.sh"
golden=$source_dir/tests/cli/golden

"$pleat" random --arch 2,8,8,1 --seed 7 > "$work/he.json" || fail "pleat random (he) exited $?"
cmp -s "$work/he.json" "$golden/random_2_8_8_1_seed7.json" ||
  fail "pleat random --arch 2,8,8,1 --seed 7 differs from golden/random_2_8_8_1_seed7.json (generator or writer changed?)"

"$pleat" random --arch 2,8,8,1 --seed 7 --init uniform --sample 3 > "$work/uniform.json" ||
  fail "pleat random (uniform) exited $?"
cmp -s "$work/uniform.json" "$golden/random_2_8_8_1_seed7_uniform_sample3.json" ||
  fail "pleat random --init uniform --sample 3 differs from its golden file"

"$pleat" random --arch 2,8,8,1 --seed 7 -o "$work/file.json" || fail "pleat random -o exited $?"
cmp -s "$work/file.json" "$work/he.json" || fail "-o FILE differs from standard output"

"$pleat" random --arch 2,8,8,1 --seed 7 --sample 1 > "$work/sample1.json" || fail "--sample 1 exited $?"
cmp -s "$work/sample1.json" "$work/he.json" && fail "--sample 1 gave the same network as sample 0"

# Seeds are decimal (no octal: 010 is ten) and span all of 0 .. 2^64-1.
"$pleat" random --arch 2,3,1 --seed 010 > "$work/s010.json" || fail "--seed 010 exited $?"
"$pleat" random --arch 2,3,1 --seed 10 > "$work/s10.json" || fail "--seed 10 exited $?"
cmp -s "$work/s010.json" "$work/s10.json" || fail "--seed 010 is not seed 10"
"$pleat" random --arch 2,3,1 --seed 18446744073709551615 --sample 18446744073709551615 > /dev/null ||
  fail "the largest seed and sample are refused"
"$pleat" random --arch 2,3,1 --seed 5 --digits 2 > "$work/d2.json" || fail "--digits 2 exited $?"
grep -q '"digits": 2' "$work/d2.json" || fail "meta does not record --digits 2"

# The written network reads back and evaluates.
"$pleat" eval "$work/he.json" --at 1/2,-1/3 > /dev/null || fail "the random network does not evaluate"

# Independent re-derivation of both golden files (skipped without python3).
[ -x /usr/bin/python3 ] || { echo "no /usr/bin/python3: skipping the re-derivation"; exit 0; }
/usr/bin/python3 - "$golden/random_2_8_8_1_seed7.json" "$golden/random_2_8_8_1_seed7_uniform_sample3.json" <<'PY' ||
import json, sys
from decimal import Decimal, getcontext, ROUND_HALF_EVEN
from fractions import Fraction

getcontext().prec = 60
MASK = (1 << 64) - 1

def splitmix64(state):
    state = (state + 0x9E3779B97F4A7C15) & MASK
    z = state
    z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & MASK
    z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & MASK
    return state, z ^ (z >> 31)

def rotl(x, k):
    return ((x << k) | (x >> (64 - k))) & MASK

class Stream:
    def __init__(self, seed, sample):
        state, key = splitmix64(seed)
        state = key ^ sample
        self.s = []
        for _ in range(4):
            state, word = splitmix64(state)
            self.s.append(word)

    def next(self):
        s = self.s
        result = (rotl((s[1] * 5) & MASK, 7) * 9) & MASK
        t = (s[1] << 17) & MASK
        s[2] ^= s[0]; s[3] ^= s[1]; s[1] ^= s[2]; s[0] ^= s[3]; s[2] ^= t
        s[3] = rotl(s[3], 45)
        return result

def arctan_inverse(n):  # arctan(1/n) by its series
    x = Decimal(1) / n
    total, power, k = Decimal(0), x, 0
    while True:
        term = power / (2 * k + 1)
        if term < Decimal(10) ** -70: return total
        total += -term if k % 2 else term
        power *= x * x
        k += 1

PI = 4 * (4 * arctan_inverse(5) - arctan_inverse(239))  # Machin's formula

def cos(x):
    total, term, k = Decimal(1), Decimal(1), 0
    while abs(term) > Decimal(10) ** -70:
        k += 2
        term *= -x * x / (k * (k - 1))
        total += term
    return total

def unit(word, offset):
    return Decimal((word >> 11) + offset) / Decimal(2 ** 53)

def normal(stream):
    u1 = unit(stream.next(), 1)
    u2 = unit(stream.next(), 0)
    return (-2 * u1.ln()).sqrt() * cos(2 * PI * u2)

def rounded(value, digits):
    if value == 0: return Fraction(0)
    quantum = Decimal(1).scaleb(value.adjusted() - digits + 1)
    return Fraction(value.quantize(quantum, rounding=ROUND_HALF_EVEN))

def draw(stream, init, fan_in, is_bias, digits):
    if init == "he":
        scale = (Decimal(1 if is_bias else 2) / fan_in).sqrt()
        return rounded(normal(stream) * scale, digits)
    return rounded((2 * unit(stream.next(), 0) - 1) / Decimal(fan_in).sqrt(), digits)

for path in sys.argv[1:]:
    doc = json.load(open(path))
    meta = doc["meta"]
    arch, digits, init = meta["architecture"], meta["digits"], meta["init"]
    stream = Stream(meta["seed"], meta["sample"])
    for k, layer in enumerate(doc["layers"]):
        fan_in = arch[k]
        for r, row in enumerate(layer["weights"]):
            for c, text in enumerate(row):
                expected = draw(stream, init, fan_in, False, digits)
                if Fraction(text) != expected:
                    sys.exit(f"{path}: layers[{k}].weights[{r}][{c}] is {text}, recipe gives {expected}")
        for r, text in enumerate(layer["bias"]):
            expected = draw(stream, init, fan_in, True, digits)
            while expected == 0:
                expected = draw(stream, init, fan_in, True, digits)
            if Fraction(text) != expected:
                sys.exit(f"{path}: layers[{k}].bias[{r}] is {text}, recipe gives {expected}")
print("all parameters re-derived from the documented recipe")
PY
  fail "the golden files do not follow the recipe documented in core/random_network.hpp"
echo "random: ok"
