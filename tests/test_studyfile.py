"""Study files: every mistake is one error naming the study key, before anything runs."""

from __future__ import annotations

import json

import pytest
import yaml

from kappa.errors import ConfigError
from kappa.io.studyfile import read_study

from .test_study import STUDY, make_study


def _study(tmp_path, change=None):
    study = json.loads(json.dumps(STUDY))
    if change is not None:
        change(study)
    return make_study(tmp_path / "in", study)


def test_a_good_study_file(tmp_path):
    s = read_study(_study(tmp_path))
    assert [x.name for x in s.samples] == ["A", "B"]
    assert s.split.draws == 300 and s.split.uncertainty == {"kappa": 0.06, "sigma": 0.04,
                                                            "S": 0.04}
    assert s.fit.shared == ("material.gruneisen",)
    assert s.fit.per_sample == ("scattering.boundary.grain_size",)
    assert s.fit.bounds["scattering.boundary.grain_size"] == pytest.approx((1e-8, 1e-4))
    assert [x.name for x in s.scenarios] == ["grains 100 nm", "defects 0.05", "defects 0.1",
                                             "unchanged"]
    assert s.scenarios[1].group == "defects" and s.scenarios[0].group is None
    assert s.projection.sample == "A" and list(s.projection.at) == [500.0]
    assert [p.name for p in s.files] == ["study.yaml", "solid.yaml", "A.csv", "B.csv"]
    assert s.sample("B").config.model.value("scattering.boundary.grain_size") == \
        pytest.approx(300e-9)


def test_defaults_and_other_spellings(tmp_path):
    def change(s):
        s["samples"][0]["files"] = "A.csv"  # one file as a string
        s["split"] = {"lorenz": "2.1e-8 W*ohm/K^2", "uncertainty": {"resistivity": "5%"}}
        s["fit"] = {"shared": "material.gruneisen=1.4",
                    "per_sample": ["scattering.boundary.grain_size=10nm:10um"]}
        s.pop("projection")
        s.pop("spectrum")
        s["projection"] = {"temperature": {"values": ["400 K", "500 K"]}}
        s["samples"][1].pop("set")
    s = read_study(_study(tmp_path, change))
    assert s.split.lorenz == pytest.approx(2.1e-8) and s.split.uncertainty == {"sigma": 0.05}
    assert s.fit.start_values == {"material.gruneisen": 1.4}
    assert s.fit.bounds["scattering.boundary.grain_size"] == pytest.approx((1e-8, 1e-5))
    assert s.projection.at is None and s.projection.sample == "A"
    assert list(s.projection.temperature) == [400.0, 500.0]
    assert s.spectrum_at.size == 0


def test_lab_file_options(tmp_path):
    # systematic+random uncertainties, an extrapolation allowance, values given once, a sheet
    def change(s):
        s["split"]["uncertainty"] = {"kappa": "0.08+0.02", "S": "5%+1%", "sigma": 0.04}
        s["split"]["extrapolate"] = "5 K"
        s["samples"][0].update(density="3.08 g/cm^3", heat_capacity="0.25 J/(g K)")
    s = read_study(_study(tmp_path, change))
    assert s.split.uncertainty == {"kappa": (0.08, 0.02), "S": (0.05, 0.01), "sigma": 0.04}
    assert s.split.extrapolate == "5 K"
    assert s.samples[0].density == "3.08 g/cm^3" and s.samples[1].density is None
    assert s.samples[0].heat_capacity == "0.25 J/(g K)"


def _sample(i, **kw):
    return lambda s: s["samples"][i].update(**kw)


@pytest.mark.parametrize("change, key, fragment", [
    (lambda s: s.pop("config"), "study.config", "missing"),
    (lambda s: s.update(config="nowhere.yaml"), "study.config", "file not found"),
    (lambda s: s.update(samples=[]), "study.samples", "non-empty list"),
    (_sample(0, name="A/B"), "study.samples.0.name", "letters, digits"),
    (_sample(1, name="a"), "study.samples.1.name", "must be unique"),
    (lambda s: s["samples"][0].pop("files"), "study.samples.0.files", "missing"),
    (_sample(0, files={"x": 1}), "study.samples.0.files", "a file name or a non-empty list"),
    (_sample(0, files=["A.csv", "A.csv"]), "study.samples.0.files", "given twice"),
    (_sample(0, composition="Xx2"), "study.samples.0.composition", ""),
    (_sample(0, set=[1]), "study.samples.0.set", "mapping KEY: VALUE"),
    (_sample(0, set={"scattering.boundary.grain_size": "1 K"}),
     "study.samples.0.set.scattering.boundary.grain_size", "wrong dimension"),
    (_sample(0, window="600K:300K"), "study.samples.0.window", "lower temperature"),
    (_sample(0, colour="red"), "study.samples.0.colour", "unknown key"),
    (lambda s: s["split"].update(scattering_exponent=9), "study.split.scattering_exponent",
     "-0.9 to 4"),
    (lambda s: s["split"].update(uncertainty={"kappa": "8 percent"}),
     "study.split.uncertainty.kappa", "relative uncertainty"),
    (lambda s: s["split"].update(uncertainty={"kappa": "x%"}),
     "study.split.uncertainty.kappa", "relative uncertainty"),
    (lambda s: s["split"].update(uncertainty={"seebeck": 0.1}),
     "study.split.uncertainty.seebeck", "unknown key"),
    (lambda s: s["split"].update(uncertainty={"kappa": "0.08+0.02+0.01"}),
     "study.split.uncertainty.kappa", "SYSTEMATIC+RANDOM"),
    (lambda s: s["split"].update(uncertainty={"kappa": "0.08+0.9"}),
     "study.split.uncertainty.kappa", "between 0 and 0.5"),
    (lambda s: s["split"].update(extrapolate="5 m"), "study.split.extrapolate",
     "temperature"),
    (_sample(0, density="3 K"), "study.samples.0.density", "wrong dimension"),
    (_sample(0, heat_capacity="-1 J/(g K)"), "study.samples.0.heat_capacity", "> 0"),
    (_sample(0, files=["A.csv", "nothere.xlsx:Sheet"]), "study.samples.0.files.1",
     "file not found"),
    (lambda s: s["split"].update(draws=10), "study.split.draws", "from 100"),
    (lambda s: s["split"].update(nan="skip"), "study.split.nan", "raise or omit"),
    (lambda s: s["split"].update(lorenz=1.0), "study.split.lorenz", "near 2e-8"),
    (lambda s: s.update(split=[1]), "study.split", "mapping"),
    (lambda s: s["fit"].update(shared=[1]), "study.fit.shared", "list of dotted keys"),
    (lambda s: s.update(fit={"starts": 3}), "study.fit", "at least one key"),
    (lambda s: s["fit"].update(per_sample=["material.gruneisen"]), "study.fit.per_sample.0",
     "fitted once"),
    (lambda s: s["fit"].update(bounds=["x"]), "study.fit.bounds", "mapping"),
    (lambda s: s["fit"].update(bounds={"material.debye_temperature": "1K:2K"}),
     "study.fit.bounds.material.debye_temperature", "only for fitted keys"),
    (lambda s: s["fit"].update(per_sample=["scattering.boundary.grain_size=1nm:1mm"]),
     "study.fit.bounds.scattering.boundary.grain_size", "bounds given twice"),
    (lambda s: s["fit"].update(bounds={"scattering.boundary.grain_size": "10 nm"}),
     "study.fit.bounds.scattering.boundary.grain_size", "LOW:HIGH"),
    (lambda s: s["fit"].update(starts=0), "study.fit.starts", "from 1"),
    (lambda s: s["fit"].update(window="hot"), "study.fit.window", "LOW:HIGH"),
    (lambda s: s["samples"][1].update(set={"material.gruneisen": 1.5}),
     "study.samples.1.set.material.gruneisen", "shared fitted key"),
    (lambda s: s["fit"].update(per_sample=["scattering.boundary.grain_size=500nm"]),
     "study.samples.1.set.scattering.boundary.grain_size", "start value in study.fit"),
    (lambda s: s["scenarios"][0].update(name=""), "study.scenarios.0.name", "short name"),
    (lambda s: s["scenarios"][0].update(key="x"), "study.scenarios.0", "either changes"),
    (lambda s: s["scenarios"][0].update(changes={}), "study.scenarios.0.changes",
     "non-empty mapping"),
    (lambda s: s["scenarios"][1].update(values=list(range(1, 14))),
     "study.scenarios.1.values", "1 to 12 values"),
    (lambda s: s["scenarios"][1].update(values=[[1]]), "study.scenarios.1.values.0",
     "a value"),
    (lambda s: s["scenarios"][1].update(key=""), "study.scenarios.1.key", "dotted key"),
    (lambda s: s["scenarios"].append({"name": "unchanged", "changes": {
        "scattering.point_defect.mass_variance": 0.03}}), "study.scenarios.3.name",
     "must be unique"),
    (lambda s: s["scenarios"].extend({"name": f"s{i}", "changes": {
        "scattering.point_defect.mass_variance": 0.001 * (i + 1)}} for i in range(21)),
     "study.scenarios", "at most 24"),
    (lambda s: s["projection"].update(at=["1 K"] * 7), "study.projection.at", "1 to 6"),
    (lambda s: s["projection"].update(at=["-5 K"]), "study.projection.at.0", "above 0 K"),
    (lambda s: s["projection"].update(temperature={"start": "300 K"}),
     "study.projection.temperature.stop", "missing"),
    (lambda s: s["projection"].update(draws=5), "study.projection.draws", "from 10"),
    (lambda s: s.update(spectrum={"at": "hot"}), "study.spectrum.at", "number with a unit"),
    (lambda s: s.update(notes={"a": 1}), "study.notes", "must be text"),
])
def test_mistakes_name_the_study_key(tmp_path, change, key, fragment):
    path = _study(tmp_path, change)
    with pytest.raises(ConfigError) as err:
        read_study(path)
    assert err.value.key == key, str(err.value)
    assert fragment in str(err.value)


def test_errors_inside_the_config_name_the_config_file(tmp_path):
    path = _study(tmp_path)
    (path.parent / "solid.yaml").write_text(yaml.safe_dump({"material": {"gruneisen": "x"}}),
                                            encoding="utf-8")
    with pytest.raises(ConfigError, match=r"^study.config \(solid.yaml\): material"):
        read_study(path)


def test_not_a_mapping(tmp_path):
    path = tmp_path / "study.yaml"
    path.write_text("- just\n- a list\n", encoding="utf-8")
    with pytest.raises(ConfigError, match="a study file is a mapping"):
        read_study(path)


def test_demo_files_copy(tmp_path):
    from kappa.cli.demo import copy_demo, demo_files

    study = copy_demo(tmp_path / "inputs")
    assert study.name == "study.yaml"
    assert sorted(p.name for p in (tmp_path / "inputs").iterdir()) == sorted(
        f.name for f in demo_files())
    assert read_study(study).projection.sample == "FH-21"
