"""Read plan's GeoJSON files with general-purpose readers: Python's json, and shapely (the GEOS
geometry library) for the geometries.

`plan --out DIR` on the demo (whose network has a `geometry` column of well-known text), then
for section_plan.geojson and work_programme.geojson: the RFC 7946 structure (a FeatureCollection
of Features, each with a geometry object or null and a properties object; LineString
coordinates of two or more positions of two numbers); one feature per row of the CSV of the same
name, every cell of the row the feature's property of that name (empty as null, flags as
booleans, numbers equal); each geometry valid in shapely and exactly the geometry shapely
reads from the network's own well-known text for that section.

Usage: python3 check_geojson.py PATH/TO/pavestrat WORKDIR
Prints what it checked and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import json
import os
import subprocess
import sys

import shapely
from shapely.geometry import shape


def same_cell(prop, text):
    """A property and the CSV cell of the same name: empty is null, a flag a boolean, a number
    the same number (the CSV writes money to the cent, as the property holds it)."""
    if text == "":
        return prop is None or prop == ""
    if isinstance(prop, bool):
        return str(prop).lower() == text
    if isinstance(prop, (int, float)):
        return abs(prop - float(text)) <= 1e-9 * max(1.0, abs(prop))
    return prop == text


def main():
    exe, work = sys.argv[1], sys.argv[2]
    os.makedirs(work, exist_ok=True)
    out = os.path.join(work, "plan")
    r = subprocess.run([exe, "-q", "plan", "--out", out], capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit(f"plan failed ({r.returncode}):\n{r.stderr}")
    passed, failed = 0, 0

    def check(ok, what):
        nonlocal passed, failed
        if ok:
            passed += 1
        else:
            failed += 1
            print("FAIL:", what)

    # The network's own lines: the built-in demo's network, as `init` writes it.
    demo = os.path.join(work, "demo")
    if not os.path.exists(os.path.join(demo, "network.csv")):
        r = subprocess.run([exe, "-q", "init", demo], capture_output=True, text=True)
        if r.returncode != 0:
            sys.exit(f"init failed ({r.returncode}):\n{r.stderr}")
    with open(os.path.join(demo, "network.csv"), newline="") as f:
        wkt = {row["section_id"]: shapely.from_wkt(row["geometry"]) for row in csv.DictReader(f)}

    for name, csv_name in [("section_plan.geojson", "section_plan.csv"), ("work_programme.geojson", "work_programme.csv")]:
        with open(os.path.join(out, name)) as f:
            doc = json.load(f)
        with open(os.path.join(out, csv_name), newline="") as f:
            rows = list(csv.DictReader(f))
        check(doc.get("type") == "FeatureCollection" and isinstance(doc.get("features"), list), f"{name}: a FeatureCollection")
        feats = doc["features"]
        check(len(feats) == len(rows), f"{name}: {len(feats)} features against {len(rows)} rows")
        structure, same, valid, cells = True, True, True, True
        for feat, row in zip(feats, rows):
            structure &= feat.get("type") == "Feature" and isinstance(feat.get("properties"), dict) and "geometry" in feat
            g = feat["geometry"]
            structure &= g is None or (g.get("type") in ("LineString", "MultiLineString") and isinstance(g.get("coordinates"), list))
            if g and g["type"] == "LineString":
                structure &= len(g["coordinates"]) >= 2 and all(len(p) == 2 and all(isinstance(v, (int, float)) for v in p) for p in g["coordinates"])
            structure &= feat["properties"].get("section_id") == row["section_id"]
            cells &= all(same_cell(feat["properties"].get(k, "missing"), v) for k, v in row.items())
            geom = shape(g)
            valid &= geom.is_valid
            same &= geom.equals_exact(wkt[row["section_id"]], 0.0)
        check(structure, f"{name}: RFC 7946 structure, one feature per row in order")
        check(cells, f"{name}: every cell of the CSV row is the feature's property of that name")
        check(valid, f"{name}: every geometry valid in shapely")
        check(same, f"{name}: every geometry exactly the network's own well-known text")
        print(f"{name}: {len(feats)} features")
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
