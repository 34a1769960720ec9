#!/usr/bin/env python3
"""Bad-input corpus: each case starts from a small good study, breaks one thing,
runs `cullcast disperse`, and checks the exit code, fragments of the message
(file and field named), that nothing crashed, and that the output folder holds
no file afterwards.

    run_bad_input.py CULLCAST_EXE --list          # case names
    run_bad_input.py CULLCAST_EXE CASE            # run one case (exit 0 = pass)

Inputs are generated here, with Debian's python3-netcdf4 and gdal-bin, so the
corpus needs no binary files in the repository.
"""
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
import netCDF4

GOOD_SCENARIO = """[study]
name = "bad-input base"
seed = 1
[currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
name = "name"
priority = "priority"
surveys = "surveys.csv"
aggregations = "aggregations.csv"
[[spawning]]
start = "2026-12-01T06:00:00Z"
hours = 1
larvae_per_reef = 20
[larvae]
precompetent_days = 0.5
competent_days = 1.0
[motion]
dt_minutes = 30
[outputs]
dir = "out"
"""

REEFS = {
    "type": "FeatureCollection",
    "features": [
        {"type": "Feature", "properties": {"id": "A", "name": "Alpha Test Reef", "priority": 0.1},
         "geometry": {"type": "Polygon", "coordinates": [[[150.05, -20.12], [150.07, -20.12], [150.07, -20.08], [150.05, -20.08], [150.05, -20.12]]]}},
        {"type": "Feature", "properties": {"id": "B", "name": "Beta Test Reef", "priority": 0.9},
         "geometry": {"type": "Polygon", "coordinates": [[[150.15, -20.15], [150.17, -20.15], [150.17, -20.05], [150.15, -20.05], [150.15, -20.15]]]}},
    ],
}

SURVEYS = "reef_id,density_per_ha,surveyed_on\nA,20.5,2026-10-01\nB,3.0,2026-10-02\n"
AGGREGATIONS = "lon,lat,count\n150.06,-20.10,12\n150.061,-20.10,8\n"


def write_currents(path, *, nx=31, ny=21, nt=73, lon0=150.0, lat0=-20.2, step=0.01,
                   u_units="m s-1", calendar="standard", time_units="hours since 2026-12-01 00:00:00",
                   u_value=0.05, u_std="eastward_sea_water_velocity", with_time=True,
                   lon_values=None, lat_values=None):
    with netCDF4.Dataset(path, "w", format="NETCDF4") as nc:
        nc.Conventions = "CF-1.13"
        if with_time:
            nc.createDimension("time", nt)
        nc.createDimension("lat", ny)
        nc.createDimension("lon", nx)
        if with_time:
            t = nc.createVariable("time", "f8", ("time",))
            t.units = time_units
            t.calendar = calendar
            t.standard_name = "time"
            t[:] = np.arange(nt, dtype=float)
        la = nc.createVariable("lat", "f8", ("lat",))
        la.units = "degrees_north"
        la.standard_name = "latitude"
        la[:] = lat_values if lat_values is not None else lat0 + step * np.arange(ny)
        lo = nc.createVariable("lon", "f8", ("lon",))
        lo.units = "degrees_east"
        lo.standard_name = "longitude"
        lo[:] = lon_values if lon_values is not None else lon0 + step * np.arange(nx)
        dims = ("time", "lat", "lon") if with_time else ("lat", "lon")
        shape = (nt, ny, nx) if with_time else (ny, nx)
        u = nc.createVariable("u", "f4", dims, fill_value=np.float32(-999))
        v = nc.createVariable("v", "f4", dims, fill_value=np.float32(-999))
        if u_std:
            u.standard_name = u_std
        v.standard_name = "northward_sea_water_velocity"
        u.units = u_units
        v.units = "m s-1"
        u[:] = np.full(shape, u_value, dtype=np.float32)
        v[:] = np.zeros(shape, dtype=np.float32)


class Study:
    def __init__(self, root):
        self.root = root
        os.makedirs(os.path.join(root, "currents"))
        write_currents(self.path("currents/flow.nc"))
        self.reefs = json.loads(json.dumps(REEFS))
        self.scenario = GOOD_SCENARIO
        self.surveys = SURVEYS
        self.aggregations = AGGREGATIONS
        self.extra_args = []

    def path(self, name):
        return os.path.join(self.root, name)

    def write(self):
        with open(self.path("s.toml"), "w", encoding="utf-8") as f:
            f.write(self.scenario)
        if self.reefs is not None:
            with open(self.path("reefs.geojson"), "w", encoding="utf-8") as f:
                json.dump(self.reefs, f)
        with open(self.path("surveys.csv"), "wb") as f:
            f.write(self.surveys.encode("utf-8") if isinstance(self.surveys, str) else self.surveys)
        with open(self.path("aggregations.csv"), "w", encoding="utf-8") as f:
            f.write(self.aggregations)

    def set_key(self, old, new):
        assert old in self.scenario, old
        self.scenario = self.scenario.replace(old, new)


def geom(study, index, geometry):
    study.reefs["features"][index]["geometry"] = geometry


# --- the cases: name -> (mutation, expected exit code, fragments) -----------
def case_table():
    cases = {}

    def case(name, code, *fragments):
        def register(fn):
            cases[name] = (fn, code, fragments)
            return fn
        return register

    @case("good_study_runs", 0)
    def _(s):
        pass

    # currents
    @case("currents_truncated", 3, "flow.nc")
    def _(s):
        p = s.path("currents/flow.nc")
        data = open(p, "rb").read()
        open(p, "wb").write(data[: len(data) // 2])

    @case("currents_not_netcdf", 3, "flow.nc")
    def _(s):
        open(s.path("currents/flow.nc"), "w").write("this is not a NetCDF file\n")

    @case("currents_empty_file", 3, "flow.nc")
    def _(s):
        open(s.path("currents/flow.nc"), "w").close()

    @case("currents_no_eastward_velocity", 3, "flow.nc", "eastward_sea_water_velocity")
    def _(s):
        write_currents(s.path("currents/flow.nc"), u_std=None)

    @case("currents_unknown_velocity_units", 3, "flow.nc", "'u'", "furlong")
    def _(s):
        write_currents(s.path("currents/flow.nc"), u_units="furlong fortnight-1")

    @case("currents_absurd_speed", 3, "flow.nc", "'u'")
    def _(s):
        write_currents(s.path("currents/flow.nc"), u_value=55.0)

    @case("currents_no_time_axis", 3, "flow.nc", "time")
    def _(s):
        write_currents(s.path("currents/flow.nc"), with_time=False)

    @case("currents_unknown_calendar", 3, "flow.nc", "calendar", "martian")
    def _(s):
        write_currents(s.path("currents/flow.nc"), calendar="martian")

    @case("currents_unknown_time_unit", 3, "flow.nc", "fortnights")
    def _(s):
        write_currents(s.path("currents/flow.nc"), time_units="fortnights since 2026-12-01")

    @case("currents_time_units_without_since", 3, "flow.nc", "time")
    def _(s):
        write_currents(s.path("currents/flow.nc"), time_units="hours")

    @case("currents_non_monotonic_longitude", 3, "flow.nc", "lon")
    def _(s):
        lons = 150.0 + 0.01 * np.arange(31)
        lons[10], lons[11] = lons[11], lons[10]
        write_currents(s.path("currents/flow.nc"), lon_values=lons)

    @case("currents_duplicated_latitude", 3, "flow.nc", "lat")
    def _(s):
        lats = -20.2 + 0.01 * np.arange(21)
        lats[5] = lats[4]
        write_currents(s.path("currents/flow.nc"), lat_values=lats)

    @case("currents_grids_differ_between_files", 3, "grid")
    def _(s):
        write_currents(s.path("currents/flow2.nc"), nx=25,
                       time_units="hours since 2026-12-04 01:00:00")

    @case("currents_spawning_after_span", 3, "s.toml", "spawning", "needs currents")
    def _(s):
        s.set_key('start = "2026-12-01T06:00:00Z"', 'start = "2026-12-05T06:00:00Z"')

    @case("currents_spawning_before_span", 3, "s.toml", "needs currents")
    def _(s):
        s.set_key('start = "2026-12-01T06:00:00Z"', 'start = "2026-11-01T06:00:00Z"')

    @case("currents_pattern_matches_nothing", 3, "s.toml", "[currents] files", "no file matches")
    def _(s):
        s.set_key('files = ["currents/*.nc"]', 'files = ["hydro/*.nc"]')

    @case("currents_all_land", 3, "none of the 60 release points lies over water", "100 % of it land",
          "reefs.geojson")
    def _(s):
        with netCDF4.Dataset(s.path("currents/flow.nc"), "a") as nc:
            nc["u"][:] = np.ma.masked

    @case("reefs_outside_currents", 3, "none of the", "release points span longitude 151.", "reefs.geojson",
          "[currents] files")
    def _(s):
        for feature in s.reefs["features"]:
            feature["geometry"]["coordinates"] = [[[x + 1.0, y] for x, y in ring]
                                                  for ring in feature["geometry"]["coordinates"]]
        s.aggregations = "lon,lat,count\n151.06,-20.10,12\n"

    # reefs
    @case("reefs_self_intersecting", 3, "reefs.geojson", "feature", "B")
    def _(s):
        geom(s, 1, {"type": "Polygon", "coordinates": [[[150.15, -20.15], [150.17, -20.05], [150.17, -20.15], [150.15, -20.05], [150.15, -20.15]]]})

    @case("reefs_empty_geometry", 3, "reefs.geojson", "B", "no geometry")
    def _(s):
        geom(s, 1, {"type": "Polygon", "coordinates": []})

    @case("reefs_null_geometry", 3, "reefs.geojson", "B")
    def _(s):
        s.reefs["features"][1]["geometry"] = None

    @case("reefs_points_not_polygons", 3, "reefs.geojson", "B", "olygon")
    def _(s):
        geom(s, 1, {"type": "Point", "coordinates": [150.16, -20.1]})

    @case("reefs_duplicate_ids", 3, "reefs.geojson", "duplicate", "A")
    def _(s):
        s.reefs["features"][1]["properties"]["id"] = "A"

    @case("reefs_empty_id", 3, "reefs.geojson", "id")
    def _(s):
        s.reefs["features"][1]["properties"]["id"] = ""

    @case("reefs_missing_id_attribute", 3, "reefs.geojson", "reef_code")
    def _(s):
        s.set_key('[reefs]\n', '[reefs]\nid = "reef_code"\n')

    @case("reefs_priority_out_of_range", 3, "reefs.geojson", "priority", "B")
    def _(s):
        s.reefs["features"][1]["properties"]["priority"] = 1.5

    @case("reefs_priority_not_numeric", 3, "reefs.geojson", "priority")
    def _(s):
        s.reefs["features"][1]["properties"]["priority"] = "high"

    @case("reefs_layer_is_garbage", 3, "reefs.geojson")
    def _(s):
        s.reefs = None
        open(s.path("reefs.geojson"), "w").write("{ not json at all")

    @case("reefs_shapefile_without_crs", 3, "reefs.shp", "CRS")
    def _(s):
        s.write()
        subprocess.run(["ogr2ogr", "-f", "ESRI Shapefile", s.path("reefs.shp"), s.path("reefs.geojson")],
                       check=True, capture_output=True)
        os.remove(s.path("reefs.prj"))
        s.set_key('layer = "reefs.geojson"', 'layer = "reefs.shp"')

    @case("reefs_layer_missing", 3, "s.toml", "[reefs] layer", "not found")
    def _(s):
        s.set_key('layer = "reefs.geojson"', 'layer = "reefs.gpkg"')

    # surveys
    @case("surveys_negative_density", 3, "surveys.csv", "line 2", "density_per_ha")
    def _(s):
        s.surveys = SURVEYS.replace("20.5", "-4")

    @case("surveys_nan_density", 3, "surveys.csv", "line 3", "density_per_ha")
    def _(s):
        s.surveys = SURVEYS.replace("3.0", "NaN")

    @case("surveys_non_numeric_density", 3, "surveys.csv", "line 2", "density_per_ha", "lots")
    def _(s):
        s.surveys = SURVEYS.replace("20.5", "lots")

    @case("surveys_unknown_reef", 3, "surveys.csv", "line 3", "Z")
    def _(s):
        s.surveys = SURVEYS.replace("B,3.0", "Z,3.0")

    @case("surveys_missing_column", 3, "surveys.csv", "density_per_ha")
    def _(s):
        s.surveys = "reef_id,surveyed_on\nA,2026-10-01\nB,2026-10-02\n"

    @case("surveys_duplicate_reef", 3, "surveys.csv", "A")
    def _(s):
        s.surveys = SURVEYS + "A,4.0,2026-10-03\n"

    @case("surveys_bom_and_crlf_are_fine", 0)
    def _(s):
        s.surveys = b"\xef\xbb\xbf" + SURVEYS.replace("\n", "\r\n").encode()

    @case("surveys_refused_when_missing", 3, "surveys.csv", "B")
    def _(s):
        s.surveys = "reef_id,density_per_ha\nA,20.5\n"
        s.set_key('surveys = "surveys.csv"\n', 'surveys = "surveys.csv"\nmissing_survey = "refuse"\n')

    # aggregations
    @case("aggregations_longitude_out_of_range", 3, "aggregations.csv", "line 2", "lon")
    def _(s):
        s.aggregations = AGGREGATIONS.replace("150.06,", "200.06,")

    @case("aggregations_count_not_numeric", 3, "aggregations.csv", "line 3", "count")
    def _(s):
        s.aggregations = AGGREGATIONS.replace(",8", ",eight")

    # scenario
    @case("scenario_unknown_key", 3, "s.toml:", "dt_minuts", "did you mean 'dt_minutes'")
    def _(s):
        s.set_key("dt_minutes = 30", "dt_minuts = 30")

    @case("scenario_unknown_section", 3, "s.toml:", "[larva]", "did you mean [larvae]")
    def _(s):
        s.set_key("[larvae]", "[larva]")

    @case("scenario_wrong_type", 3, "s.toml:", "larvae_per_reef", "expected a whole number")
    def _(s):
        s.set_key("larvae_per_reef = 20", 'larvae_per_reef = "twenty"')

    @case("scenario_missing_required_key", 3, "s.toml:", "[reefs] missing required key 'layer'")
    def _(s):
        s.set_key('layer = "reefs.geojson"\n', "")

    @case("scenario_negative_time_step", 3, "s.toml:", "dt_minutes", "positive")
    def _(s):
        s.set_key("dt_minutes = 30", "dt_minutes = -30")

    @case("scenario_zero_competency_window", 3, "s.toml:", "competent_days")
    def _(s):
        s.set_key("competent_days = 1.0", "competent_days = 0")

    @case("scenario_invalid_toml", 3, "s.toml:", "not valid TOML")
    def _(s):
        s.scenario += "\nthis is not = = toml\n"

    @case("scenario_bad_date", 3, "s.toml:", "start", "month 13")
    def _(s):
        s.set_key('start = "2026-12-01T06:00:00Z"', 'start = "2026-13-01T06:00:00Z"')

    @case("scenario_no_spawning", 3, "s.toml", "[[spawning]]")
    def _(s):
        start = s.scenario.index("[[spawning]]")
        end = s.scenario.index("[larvae]")
        s.scenario = s.scenario[:start] + s.scenario[end:]

    @case("scenario_unknown_scheme", 3, "s.toml:", "scheme", "did you mean \"rk4\"")
    def _(s):
        s.set_key("dt_minutes = 30", 'dt_minutes = 30\nscheme = "rk44"')

    @case("scenario_negative_buffer", 3, "s.toml:", "settle_buffer_m")
    def _(s):
        s.set_key('[reefs]\n', '[reefs]\nsettle_buffer_m = -5\n')

    @case("scenario_set_unknown_key", 3, "(--set)", "did you mean 'kh_m2_s'")
    def _(s):
        s.extra_args = ["--set", "motion.kh_m2=1"]

    @case("scenario_set_bad_value", 3, "(--set)", "kh_m2_s")
    def _(s):
        s.extra_args = ["--set", "motion.kh_m2_s=-1"]

    @case("scenario_missing_file", 3, "cannot open scenario file")
    def _(s):
        s.write()
        os.remove(s.path("s.toml"))
        s.scenario = None

    return cases


def main():
    exe = os.path.abspath(sys.argv[1])
    cases = case_table()
    if sys.argv[2] == "--list":
        print("\n".join(cases))
        return 0
    name = sys.argv[2]
    mutate, code, fragments = cases[name]
    root = tempfile.mkdtemp(prefix="cullcast-bad-")
    try:
        s = Study(root)
        mutate(s)
        if s.scenario is not None:
            s.write()
        run = subprocess.run([exe, "--quiet", "disperse", s.path("s.toml")] + s.extra_args,
                             capture_output=True, text=True, timeout=300, cwd=root)
        problems = []
        if run.returncode < 0:
            problems.append(f"killed by signal {-run.returncode}")
        if run.returncode != code:
            problems.append(f"exit code {run.returncode}, expected {code}")
        for bad in ("terminate called", "Segmentation", "AddressSanitizer", "runtime error:"):
            if bad in run.stderr:
                problems.append(f"crash marker in stderr: {bad}")
        for fragment in fragments:
            if fragment not in run.stderr:
                problems.append(f"stderr lacks {fragment!r}")
        out = s.path("out")
        if code != 0 and os.path.isdir(out) and os.listdir(out):
            problems.append(f"output folder not empty: {os.listdir(out)}")
        if code == 0 and not os.path.exists(os.path.join(out, "settlement.nc")):
            problems.append("no settlement.nc written")
        if problems:
            print("stdout:", run.stdout[-3000:])
            print("stderr:", run.stderr[-3000:])
            print("\n".join(problems))
            return 1
        return 0
    finally:
        shutil.rmtree(root, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
