"""The anchor of the side-by-side ray benchmark: Embree 4 through the embreex package (PyPI),
float32, its batch call, on the triangles and rays `rays_side_by_side` wrote; fastest of five runs
after a first call that builds its BVH. First hits, then every hit (by repeated first-hit casts).
Prints its rate, Plumbline's, their ratio per core, and how far the answers agree ray by ray.

python3 benches/anchor_rays.py OUT_DIR
"""
import json
import sys
import time

import numpy as np
from embreex import rtcore_scene
from embreex.mesh_construction import TriangleMesh

out = sys.argv[1]
summary = json.load(open(f"{out}/plumbline.json"))
triangles = np.fromfile(f"{out}/triangles.f32", dtype="<f4").reshape(-1, 3, 3)
rays = np.fromfile(f"{out}/rays.f32", dtype="<f4").reshape(-1, 7)
ours = np.fromfile(f"{out}/plumbline.f64", dtype="<f8")
origins = np.ascontiguousarray(rays[:, 0:3])
directions = np.ascontiguousarray(rays[:, 3:6])
lengths = np.ascontiguousarray(rays[:, 6])

scene = rtcore_scene.EmbreeScene()
TriangleMesh(scene, triangles)
scene.run(origins[:1000], directions[:1000], dists=lengths[:1000].copy())  # builds the BVH
seconds = []
for _ in range(5):
    started = time.perf_counter()
    result = scene.run(origins, directions, dists=lengths.copy(), output=1)
    seconds.append(time.perf_counter() - started)
embree = min(seconds)
n = len(rays)
hit = result["geomID"] >= 0
theirs = np.where(hit, result["tfar"], np.nan)
both = ~np.isnan(ours) & hit
disagree = int(np.sum(np.isnan(ours) == hit))
delta = np.abs(ours[both] - theirs[both].astype(np.float64))
ours_rate = n / summary["seconds_1_thread"] / 1e6
embree_rate = n / embree / 1e6
print(f"{summary['level']} level, {summary['triangles']} triangles, {n} first-hit rays")
print(f"  Embree 4 (embreex, float32, batch call):        {embree_rate:.2f} M rays/s")
print(f"  Plumbline (f64, watertight, one thread):        {ours_rate:.2f} M rays/s"
      f"  (two threads: {n / summary['seconds_2_threads'] / 1e6:.2f} M rays/s)")
print(f"  ratio per core, Plumbline / Embree: {ours_rate / embree_rate:.2f}")
print(f"  hit/miss disagreements: {disagree}; distance |difference| where both hit: "
      f"median {np.median(delta):.1e} m, max {np.max(delta):.1e} m, over 1 mm: {int(np.sum(delta > 1e-3))}")


def every_hit():
    """Every hit by repeated first-hit casts, each restarting 0.1 mm past the last hit (embreex has
    no call that returns all hits; the restart gap is common practice, a value of ours). Counts
    hits per ray."""
    count = np.zeros(n, dtype=np.int64)
    start = origins.copy()
    left = lengths.copy()
    active = np.arange(n)
    while active.size:
        found = scene.run(start[active], directions[active], dists=left[active].copy(), output=1)
        met = found["geomID"] >= 0
        rays_met = active[met]
        count[rays_met] += 1
        step = found["tfar"][met] + np.float32(1e-4)
        start[rays_met] += directions[rays_met] * step[:, None]
        left[rays_met] -= step
        active = rays_met[left[rays_met] > 0]
    return count


all_seconds = []
for _ in range(5):
    started = time.perf_counter()
    counts = every_hit()
    all_seconds.append(time.perf_counter() - started)
ours_all = np.fromfile(f"{out}/plumbline_all.u32", dtype="<u4").astype(np.int64)
embree_all_rate = n / min(all_seconds) / 1e6
ours_all_rate = n / summary["all_seconds_1_thread"] / 1e6
print(f"  all hits, Embree 4 (repeated first-hit casts):  {embree_all_rate:.2f} M rays/s")
print(f"  all hits, Plumbline (one thread):               {ours_all_rate:.2f} M rays/s"
      f"  (two threads: {n / summary['all_seconds_2_threads'] / 1e6:.2f} M rays/s)")
print(f"  all hits, ratio per core, Plumbline / Embree: {ours_all_rate / embree_all_rate:.2f}")
print(f"  rays whose hit counts differ: {int(np.sum(ours_all != counts))} of {n}"
      f" (hits: Plumbline {int(ours_all.sum())}, Embree {int(counts.sum())})")
