#!/usr/bin/env python3
"""Example external solver for Arcwatch, speaking the "arcwatch-solver/1" protocol.

Reads one JSON request on standard input (see protocol.schema.json, "request") and writes one
JSON response on standard output ("response"). Standard library only.

Method: bang-bang shooting for minimum-time problems with one bounded control. The control
alternates between its bounds with nx - 1 switches (nx = number of states), starting at the
upper bound (then, if that fails, at the lower bound); the unknowns are the switching times and
the final time, the equations are the fixed final values of the states. Newton's method with a
forward-difference Jacobian solves them; each arc is integrated with the classical fourth-order
Runge-Kutta method (Kutta, 1901), the request's mesh.intervals steps spread over the arcs in
proportion to their lengths. Problems outside this class are answered with status
"unsupported", which Arcwatch records as a failure of this solver on that case.
"""
import json
import math
import sys
import time

PROTOCOL = "arcwatch-solver/1"
MATH = {name: getattr(math, name) for name in ("exp", "log", "sqrt", "sin", "cos", "tan", "atan", "atan2", "sinh", "cosh", "tanh")}
MATH.update({"abs": abs, "min": min, "max": max, "pi": math.pi, "e": math.e})


def compile_expr(text):
    """A mathjs expression of the problem format as a Python code object ('^' is power)."""
    return compile(str(text).replace("^", "**"), "<expr>", "eval")


def value_of(v, env):
    if isinstance(v, (int, float)):
        return float(v)
    if isinstance(v, dict) and "value" in v:
        return float(v["value"])
    return float(eval(compile_expr(v), {"__builtins__": {}}, dict(env)))


class Unsupported(Exception):
    pass


def setup(problem):
    consts = {}
    for name, v in problem.get("constants", {}).items():
        consts[name] = value_of(v, {**MATH, **consts})
    states = [s["name"] for s in problem["states"]]
    controls = problem.get("controls", [])
    if len(controls) != 1:
        raise Unsupported("needs exactly one control")
    c = controls[0]
    env = {**MATH, **consts}
    if c.get("lower") is None or c.get("upper") is None:
        raise Unsupported("the control needs finite bounds")
    lower, upper = value_of(c["lower"], env), value_of(c["upper"], env)
    obj = problem.get("objective", {})
    if obj.get("sense", "min") != "min" or str(obj.get("terminal", "")).strip() != "tf" or obj.get("running"):
        raise Unsupported("only minimum-time objectives (terminal 'tf')")
    if "free" not in problem["horizon"]["finalTime"]:
        raise Unsupported("needs a free final time")
    if problem.get("path") or problem.get("events") or problem.get("endpoint"):
        raise Unsupported("no path or general endpoint constraints")
    x0 = []
    for s in states:
        v = problem.get("initial", {}).get(s)
        if not isinstance(v, (int, float, str)):
            raise Unsupported("every initial value must be fixed")
        x0.append(value_of(v, env))
    xf = {}
    for s, v in problem.get("final", {}).items():
        if not isinstance(v, (int, float, str)):
            raise Unsupported("final values must be fixed")
        xf[s] = value_of(v, env)
    if len(xf) != len(states):
        raise Unsupported("every final value must be fixed")
    inter = [(i["name"], compile_expr(i["expr"])) for i in problem.get("intermediates", [])]
    dyn = [compile_expr(problem["dynamics"][s]) for s in states]
    t0 = value_of(problem["horizon"].get("initialTime", 0), env)
    guess_tf = value_of(problem["horizon"]["finalTime"]["free"].get("guess", 1.0), env)
    return dict(consts=consts, states=states, control=c["name"], lower=lower, upper=upper, x0=x0, xf=[xf[s] for s in states], inter=inter, dyn=dyn, t0=t0, guess_tf=guess_tf)


def rhs(p, t, x, u):
    env = {**MATH, **p["consts"], "t": t, p["control"]: u}
    env.update(zip(p["states"], x))
    for name, code in p["inter"]:
        env[name] = eval(code, {"__builtins__": {}}, env)
    return [eval(code, {"__builtins__": {}}, env) for code in p["dyn"]]


def rk4_arc(p, t, x, u, length, steps, out):
    h = length / steps
    for _ in range(steps):
        k1 = rhs(p, t, x, u)
        k2 = rhs(p, t + h / 2, [xi + h / 2 * ki for xi, ki in zip(x, k1)], u)
        k3 = rhs(p, t + h / 2, [xi + h / 2 * ki for xi, ki in zip(x, k2)], u)
        k4 = rhs(p, t + h, [xi + h * ki for xi, ki in zip(x, k3)], u)
        x = [xi + h / 6 * (a + 2 * b + 2 * c + d) for xi, a, b, c, d in zip(x, k1, k2, k3, k4)]
        t += h
        if out is not None:
            out.append((t, x, u))
    return t, x


def simulate(p, durations, first, steps, out=None):
    """Integrates the arcs of the given durations; returns the final state."""
    total = sum(durations)
    t, x = p["t0"], list(p["x0"])
    if out is not None:
        out.append((t, x, first))
    u = first
    for d in durations:
        n = max(1, round(steps * d / total)) if total > 0 else 1
        t, x = rk4_arc(p, t, x, u, d, n, out)
        u = p["lower"] if u == p["upper"] else p["upper"]
    return x


def solve_linear(a, b):
    n = len(b)
    m = [row[:] + [b[i]] for i, row in enumerate(a)]
    for c in range(n):
        piv = max(range(c, n), key=lambda r: abs(m[r][c]))
        if abs(m[piv][c]) < 1e-300:
            raise ZeroDivisionError("singular Jacobian")
        m[c], m[piv] = m[piv], m[c]
        for r in range(c + 1, n):
            f = m[r][c] / m[c][c]
            for k in range(c, n + 1):
                m[r][k] -= f * m[c][k]
    x = [0.0] * n
    for r in range(n - 1, -1, -1):
        x[r] = (m[r][n] - sum(m[r][k] * x[k] for k in range(r + 1, n))) / m[r][r]
    return x


def shoot(p, first, steps):
    nx = len(p["states"])
    d = [p["guess_tf"] / nx] * nx  # arc durations; tf = sum
    def residual(dv):
        xf = simulate(p, dv, first, steps)
        return [a - b for a, b in zip(xf, p["xf"])]
    r = residual(d)
    for it in range(1, 60):
        norm = max(abs(v) for v in r)
        if norm < 1e-10:
            return d, it - 1, norm
        jac = [[0.0] * nx for _ in range(nx)]
        for j in range(nx):
            h = 1e-7 * max(1.0, abs(d[j]))
            dj = list(d)
            dj[j] += h
            rj = residual(dj)
            for i in range(nx):
                jac[i][j] = (rj[i] - r[i]) / h
        step = solve_linear(jac, [-v for v in r])
        lam = 1.0
        while lam > 1e-4:
            trial = [max(1e-9, di + lam * si) for di, si in zip(d, step)]
            rt = residual(trial)
            if max(abs(v) for v in rt) < norm:
                d, r = trial, rt
                break
            lam /= 2
        else:
            break
    return None, 60, max(abs(v) for v in r)


def answer(request):
    problem = request["problem"]
    steps = int(request["case"]["mesh"]["intervals"])
    t_start = time.perf_counter()
    try:
        p = setup(problem)
    except Unsupported as e:
        return {"protocol": PROTOCOL, "status": "unsupported", "message": str(e)}
    best = None
    for first in (p["upper"], p["lower"]):
        try:
            d, iters, res = shoot(p, first, steps)
        except (ZeroDivisionError, OverflowError, ValueError) as e:
            continue
        if d is not None:
            best = (d, iters, res, first)
            break
    seconds = time.perf_counter() - t_start
    if best is None:
        return {"protocol": PROTOCOL, "status": "failed", "message": "shooting did not converge", "solveSeconds": seconds}
    d, iters, res, first = best
    out = []
    simulate(p, d, first, steps, out)
    tf = p["t0"] + sum(d)
    return {
        "protocol": PROTOCOL,
        "status": "optimal",
        "message": f"bang-bang shooting, {len(d) - 1} switch(es), final residual {res:.2e}",
        "objective": tf,
        "finalTime": tf,
        "iterations": iters,
        "constraintViolation": res,
        "solveSeconds": seconds,
        "trajectory": {
            "t": [row[0] for row in out],
            "states": {s: [row[1][i] for row in out] for i, s in enumerate(p["states"])},
            "controls": {p["control"]: [row[2] for row in out]},
        },
    }


def main():
    try:
        request = json.load(sys.stdin)
    except json.JSONDecodeError as e:
        print(f"request is not JSON: {e}", file=sys.stderr)
        return 2
    if request.get("protocol") != PROTOCOL:
        print(f"unsupported protocol {request.get('protocol')!r}; this adapter speaks {PROTOCOL}", file=sys.stderr)
        return 2
    json.dump(answer(request), sys.stdout)
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
