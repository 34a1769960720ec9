#!/usr/bin/env python3
"""Demo inputs for the invented archipelago "Lantern Reach" (nothing here is real).

Writes, beside this script:
  reefs.geojson     ~50 invented reef outlines (RFC 7946: WGS84 lon/lat, outer rings
                    counterclockwise, holes clockwise), attributes id, name, priority
                    and, for the high-priority reefs, value = tourism | research | recovering
  surveys.csv       adults per hectare (some above ~15 per ha, the outbreak threshold
                    used in the docs), survey dates, counts by size class; a few reefs unsurveyed
  aggregations.csv  a few point detections of spawning aggregations

Deterministic: a fixed seed, python3 standard library only.  Run: python3 make_reefs.py
"""
import csv
import json
import math
import os
import random

SEED = 20251214
BOX = (150.0, 150.6, -20.4, -20.0)       # lon_min, lon_max, lat_min, lat_max (degrees)
EDGE_MARGIN_DEG = 0.03                   # keep reefs this far inside the box
ISLANDS = [(150.15, -20.2), (150.42, -20.28)]  # land, radius ~2 km
ISLAND_CLEAR_M = 3200.0                  # reef centre + radius stays this far from an island centre
N_REEFS = 50
M_PER_DEG_LAT = 110_700.0                # near 20 S (approximate; areas are computed by cullcast)

FIRST = ["Ember", "Kestrel", "Lantern", "Moth", "Quill", "Tallow", "Wren", "Cinder", "Flint",
         "Juniper", "Marrow", "Pewter", "Saffron", "Thimble", "Umber", "Vesper", "Willow",
         "Bramble", "Copperleaf", "Driftwick", "Fable", "Hollowmere", "Ivory", "Jasperline",
         "Linnet", "Morrow", "Nettle", "Oriel", "Pippin", "Rookery", "Sable", "Ternwick",
         "Valewind", "Warden", "Yarrow", "Zephyrine", "Ashgrove", "Cobalt", "Duskfall", "Echo",
         "Fernlight", "Gullwing", "Hazelmoor", "Inkwell", "Larkspur", "Mallow", "Nimbus",
         "Oakum", "Pennant", "Quarry"]
SUFFIX = ["Shoal", "Bank", "Reef", "Patch", "Knoll", "Bommie"]
VALUES = ["tourism", "research", "recovering"]


def m_per_deg_lon(lat):
    return M_PER_DEG_LAT * math.cos(math.radians(lat))


def dist_m(a, b):
    dx = (a[0] - b[0]) * m_per_deg_lon((a[1] + b[1]) / 2)
    dy = (a[1] - b[1]) * M_PER_DEG_LAT
    return math.hypot(dx, dy)


def star_ring(rng, centre, radius_m, vertices, wobble, clockwise=False):
    """A star-shaped ring around centre: radius varies with angle (concave when wobble is large)."""
    k = rng.choice([2, 3, 4, 5])
    phase = rng.uniform(0, 2 * math.pi)
    pts = []
    for i in range(vertices):
        t = 2 * math.pi * i / vertices
        r = radius_m * (1 + wobble * math.sin(k * t + phase) + rng.uniform(-0.06, 0.06))
        x, y = r * math.cos(t), r * math.sin(t)
        pts.append([round(centre[0] + x / m_per_deg_lon(centre[1]), 7),
                    round(centre[1] + y / M_PER_DEG_LAT, 7)])
    if clockwise:
        pts.reverse()
    pts.append(pts[0])
    return pts


def main():
    rng = random.Random(SEED)
    here = os.path.dirname(os.path.abspath(__file__))
    placed = []  # (centre, extent_m)
    features = []
    high = set(rng.sample(range(N_REEFS), 8))
    hole_reef, multi_reef = 7, 19
    names = FIRST[:]
    rng.shuffle(names)
    for i in range(N_REEFS):
        # Area 5..300 ha, spread on a log scale.
        area_ha = math.exp(rng.uniform(math.log(5), math.log(300)))
        if i == hole_reef:
            area_ha = 220.0
        radius = math.sqrt(area_ha * 1e4 / math.pi)
        extent = radius * 1.4 + (700 if i == multi_reef else 0)
        for _ in range(10000):
            c = (rng.uniform(BOX[0] + EDGE_MARGIN_DEG, BOX[1] - EDGE_MARGIN_DEG),
                 rng.uniform(BOX[2] + EDGE_MARGIN_DEG, BOX[3] - EDGE_MARGIN_DEG))
            if any(dist_m(c, isl) < ISLAND_CLEAR_M + extent for isl in ISLANDS):
                continue
            if any(dist_m(c, pc) < extent + pe + 400 for pc, pe in placed):
                continue
            break
        else:
            raise SystemExit("could not place reef %d" % i)
        placed.append((c, extent))
        wobble = 0.35 if i % 3 == 0 else 0.12     # every third reef clearly concave
        verts = rng.randint(14, 28)
        if i == hole_reef:
            outer = star_ring(rng, c, radius, 32, 0.08)
            lagoon = star_ring(rng, c, radius * 0.45, 16, 0.05, clockwise=True)
            geometry = {"type": "Polygon", "coordinates": [outer, lagoon]}
        elif i == multi_reef:
            off = 350.0 / m_per_deg_lon(c[1])
            a = star_ring(rng, (c[0] - off, c[1]), radius * 0.6, verts, wobble)
            b = star_ring(rng, (c[0] + off, c[1]), radius * 0.5, verts, wobble)
            geometry = {"type": "MultiPolygon", "coordinates": [[a], [b]]}
        else:
            geometry = {"type": "Polygon", "coordinates": [star_ring(rng, c, radius, verts, wobble)]}
        props = {"id": "LR-%02d" % (i + 1),
                 "name": "%s %s" % (names[i], rng.choice(SUFFIX)),
                 "priority": round(rng.uniform(0.8, 1.0), 2) if i in high else round(rng.uniform(0.05, 0.5), 2)}
        if i in high:
            props["value"] = VALUES[sorted(high).index(i) % 3]
        features.append({"type": "Feature", "properties": props, "geometry": geometry})

    with open(os.path.join(here, "reefs.geojson"), "w", encoding="utf-8") as f:
        json.dump({"type": "FeatureCollection", "name": "lantern_reach_reefs", "features": features}, f, indent=1)
        f.write("\n")

    # Surveys: most reefs; about a quarter above 15 adults per hectare.
    unsurveyed = set(rng.sample(range(N_REEFS), 5))
    with open(os.path.join(here, "surveys.csv"), "w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["reef_id", "density_per_ha", "surveyed_on", "count_0_15cm", "count_15_25cm",
                    "count_25_35cm", "count_35cm_plus", "notes"])
        for i in range(N_REEFS):
            if i in unsurveyed:
                continue
            outbreak = rng.random() < 0.25
            density = rng.uniform(16, 60) if outbreak else rng.uniform(0.2, 12)
            date = "2025-10-%02d" % rng.randint(1, 31)
            counts = [rng.randint(0, 30) for _ in range(4)] if i % 2 == 0 else ["", "", "", ""]
            note = "outbreak front, many feeding scars" if outbreak else ""
            w.writerow(["LR-%02d" % (i + 1), "%.1f" % density, date] + counts + [note])

    # Aggregations: two groups on reefs, one just off a reef, one in open water.
    def around(centre, n, spread_m):
        out = []
        for _ in range(n):
            out.append((centre[0] + rng.uniform(-spread_m, spread_m) / m_per_deg_lon(centre[1]),
                        centre[1] + rng.uniform(-spread_m, spread_m) / M_PER_DEG_LAT))
        return out
    rows = []
    for idx, n in ((3, 4), (11, 3)):
        c, _ = placed[idx]
        rows += [(p, rng.randint(5, 60)) for p in around(c, n, 40)]
    c, e = placed[24]
    off = (c[0] + (e + 500) / m_per_deg_lon(c[1]), c[1])
    rows += [(p, rng.randint(5, 40)) for p in around(off, 2, 30)]
    for _ in range(10000):
        p = (rng.uniform(BOX[0] + 0.05, BOX[1] - 0.05), rng.uniform(BOX[2] + 0.05, BOX[3] - 0.05))
        if all(dist_m(p, pc) > pe + 4000 for pc, pe in placed) and all(dist_m(p, isl) > 4000 for isl in ISLANDS):
            break
    rows.append((p, 12))
    with open(os.path.join(here, "aggregations.csv"), "w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["lon", "lat", "count", "mean_diameter_cm", "observed_at", "notes"])
        for k, (p, n) in enumerate(rows):
            w.writerow(["%.6f" % p[0], "%.6f" % p[1], n, "%.1f" % rng.uniform(25, 40),
                        "2025-12-%02dT21:%02d:00Z" % (10 + k // 4, (7 * k) % 60), "spawning posture"])


if __name__ == "__main__":
    main()
