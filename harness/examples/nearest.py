#!/usr/bin/env python3
"""A minimal nearest-neighbour tracker speaking trackgate's tracker protocol.

Standard library only. It keeps one Kalman filter per scenario object,
started from the object's prior at its appear step, and updates each filter
with the nearest detection inside its gate (greedy, closest pair first).
Read harness/PROTOCOL.md for the messages.

    trackgate check --against reference \
        --tracker "python3 harness/examples/nearest.py" scenarios/*.yaml
"""
import json
import math
import statistics
import sys


def matmul(a, b):
    return [[sum(x * y for x, y in zip(row, col)) for col in zip(*b)] for row in a]


def transpose(a):
    return [list(col) for col in zip(*a)]


def add(a, b, sign=1.0):
    return [[x + sign * y for x, y in zip(ra, rb)] for ra, rb in zip(a, b)]


def inverse(a):
    """Gauss-Jordan elimination with partial pivoting."""
    n = len(a)
    m = [list(row) + [float(i == j) for j in range(n)] for i, row in enumerate(a)]
    for c in range(n):
        p = max(range(c, n), key=lambda r: abs(m[r][c]))
        m[c], m[p] = m[p], m[c]
        d = m[c][c]
        m[c] = [x / d for x in m[c]]
        for r in range(n):
            if r != c and m[r][c] != 0.0:
                f = m[r][c]
                m[r] = [x - f * y for x, y in zip(m[r], m[c])]
    return [row[n:] for row in m]


def gate_threshold(prob, dim):
    """Chi-square quantile: exact for 2 dimensions, Wilson-Hilferty otherwise."""
    if dim == 2:
        return -2.0 * math.log(1.0 - prob)
    z = statistics.NormalDist().inv_cdf(prob)
    k = 2.0 / (9.0 * dim)
    return dim * (1.0 - k + z * math.sqrt(k)) ** 3


class Tracker:
    def __init__(self, start):
        m = start["model"]
        self.F, self.Q, self.H, self.R = m["F"], m["Q"], m["H"], m["R"]
        self.gate = gate_threshold(m.get("gate_prob") or 0.999, m["meas_dim"])
        self.objects = start["objects"]
        self.state = {}  # object id -> (x as a column, P)

    def step(self, scan):
        k, dets = scan["step"], scan["detections"]
        alive = [o for o in self.objects
                 if o["appear"] <= k and (o["disappear"] is None or k < o["disappear"])]
        for o in self.objects:
            if o not in alive:
                self.state.pop(o["id"], None)
        pairs = []
        for o in alive:
            if o["id"] not in self.state:
                self.state[o["id"]] = ([[v] for v in o["mean"]], o["cov"], o["appear"])
            x, P, at = self.state[o["id"]]
            for _ in range(at, k):  # predict up to this step
                x = matmul(self.F, x)
                P = add(matmul(matmul(self.F, P), transpose(self.F)), self.Q)
            S = add(matmul(matmul(self.H, P), transpose(self.H)), self.R)
            Si = inverse(S)
            self.state[o["id"]] = (x, P, k)
            for d in dets:
                y = [[z - hx[0]] for z, hx in zip(d["z"], matmul(self.H, x))]
                dist = matmul(matmul(transpose(y), Si), y)[0][0]
                if dist <= self.gate:
                    pairs.append((dist, o["id"], d["id"], y, Si))
        used_obj, used_det, chosen = set(), set(), {}
        for dist, oid, did, y, Si in sorted(pairs, key=lambda p: (p[0], p[1], p[2])):
            if oid not in used_obj and did not in used_det:
                used_obj.add(oid)
                used_det.add(did)
                chosen[oid] = (did, y, Si)
        tracks = []
        for o in alive:
            x, P, _ = self.state[o["id"]]
            did = None
            if o["id"] in chosen:
                did, y, Si = chosen[o["id"]]
                K = matmul(matmul(P, transpose(self.H)), Si)
                x = add(x, matmul(K, y))
                P = matmul(add([[float(i == j) for j in range(len(P))] for i in range(len(P))],
                               matmul(K, self.H), -1.0), P)
                P = [[(P[i][j] + P[j][i]) / 2.0 for j in range(len(P))] for i in range(len(P))]
                self.state[o["id"]] = (x, P, k)
            tracks.append({"id": o["id"], "mean": [r[0] for r in x], "cov": P, "detection": did})
        return {"type": "tracks", "step": k, "tracks": tracks}


def main():
    tracker = None
    for line in sys.stdin:
        msg = json.loads(line)
        if msg["type"] == "start":
            tracker = Tracker(msg)
            reply = {"type": "ready", "protocol": 1, "tracker": "nearest-example", "version": "1",
                     "reports": {"covariance": True, "detection": True}, "many_runs": True}
        elif msg["type"] == "scan":
            reply = tracker.step(msg)
        else:  # stop
            continue
        sys.stdout.write(json.dumps(reply, separators=(",", ":")) + "\n")
        sys.stdout.flush()


if __name__ == "__main__":
    main()
