#!/usr/bin/python3
"""The yardstick of `npm run bench`: Debian's python3-sympy expanding the same
closed loops the engine reduces, and nothing else.

Reads a JSON list of loop files on stdin. For each, builds the closed loop's
numerator and denominator symbolically (parameters and s as symbols, the
structure's products and sums left unexpanded: series N = prod N_i, D = prod D_i;
parallel over the common product of denominators; feedback N_G D_H over
D_G D_H - sign N_G N_H), then times sympy.expand of both with the cache
cleared before each repetition (sympy.core.cache.clear_cache()), by
time.perf_counter inside python. Writes [{"median_ms", "reps", "terms"}]:
`terms` is the number of monomials (in s and the parameters) of the expanded
numerator plus denominator, the size of the result.
"""

import json
import statistics
import sys
import time

try:
    import sympy
    from sympy.core.cache import clear_cache
    from sympy.parsing.sympy_parser import parse_expr, rationalize, standard_transformations
except ImportError as missing:
    sys.stderr.write("bench-sympy.py needs Debian's python3-sympy (apt-get install python3-sympy): %s\n" % missing)
    sys.exit(3)

TRANSFORMS = standard_transformations + (rationalize,)


def parse(text, symbols):
    # Every name is a plain symbol (zeta, gamma, E, ... are sympy functions otherwise).
    return parse_expr(str(text).replace("^", "**"), local_dict=symbols, transformations=TRANSFORMS, evaluate=True)


def reduce_node(node, blocks):
    if isinstance(node, str):
        return blocks[node]
    if "series" in node:
        parts = [reduce_node(n, blocks) for n in node["series"]]
        return sympy.Mul(*[p[0] for p in parts]), sympy.Mul(*[p[1] for p in parts])
    if "parallel" in node:
        parts = [reduce_node(n, blocks) for n in node["parallel"]]
        signs = node.get("signs") or [1] * len(parts)
        num = sympy.Add(*[sg * p[0] * sympy.Mul(*[q[1] for j, q in enumerate(parts) if j != i])
                          for i, (p, sg) in enumerate(zip(parts, signs))])
        return num, sympy.Mul(*[p[1] for p in parts])
    fb = node["feedback"]
    g_num, g_den = reduce_node(fb["forward"], blocks)
    sign = int(fb.get("sign", -1))
    if fb.get("return") is None:
        return g_num, g_den - sign * g_num
    h_num, h_den = reduce_node(fb["return"], blocks)
    return g_num * h_den, g_den * h_den - sign * g_num * h_num


def closed_loop(loop):
    names = list((loop.get("parameters") or {}).keys())
    symbols = {n: sympy.Symbol(n) for n in names}
    symbols["s"] = sympy.Symbol("s")
    blocks = {bid: (parse(b.get("num", "1"), symbols), parse(b.get("den", "1"), symbols)) for bid, b in loop["blocks"].items()}
    return reduce_node(loop["structure"], blocks)


def main():
    loops = json.load(sys.stdin)
    out = []
    for loop in loops:
        num, den = closed_loop(loop)
        times = []
        started = time.perf_counter()
        while len(times) < 5 or (len(times) < 51 and time.perf_counter() - started < 1.5):
            clear_cache()
            t0 = time.perf_counter()
            en = sympy.expand(num)
            ed = sympy.expand(den)
            times.append((time.perf_counter() - t0) * 1000.0)
        terms = len(sympy.Add.make_args(en)) + len(sympy.Add.make_args(ed))
        out.append({"median_ms": statistics.median(times), "reps": len(times), "terms": terms})
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
