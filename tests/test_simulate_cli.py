"""`evidence1d simulate` writes datasets that load back, say they are simulated, and follow
the model (high exposure: Poisson noise small)."""
import numpy as np

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.cli import main


def test_simulate_command_round_trip(tmp_path, capsys):
    case_path = write_valid_case(tmp_path / "c", CASE_YAML.replace("  - spinon_continuum",
                                                                   "  - paramagnon"))
    out = tmp_path / "sim"
    code = main(["simulate", "paramagnon", "--case", str(case_path), "--out", str(out),
                 "--set", "chi_uniform=0.01", "--set", "theta_sf=20", "--set", "xi_par=6",
                 "--set", "xi_perp=1", "--set", "gamma0=2", "--set", "g=2.1",
                 "--set", "map:scale=5", "--seed", "3", "--exposure", "1e6"])
    assert code == 0
    for name in ("map.csv", "chi.csv", "heat.csv"):
        text = (out / name).read_text()
        assert text.startswith("# SIMULATED")
        (tmp_path / "c" / name).write_text(text)          # use them as the case's data
    case = evidence1d.load_case(case_path)
    prob = case.problem("paramagnon")
    truth = {"chi_uniform": 0.01, "theta_sf": 20.0, "xi_par": 6.0, "xi_perp": 1.0,
             "gamma0": 2.0, "g": 2.1, "map:scale": 5.0}
    theta = np.array([truth.get(n, 0.0) for n in prob.full_names])
    pred = prob.predict(theta[None])
    ds = case.datasets[0]
    np.testing.assert_allclose(ds.y, pred["map"][0], rtol=0.05, atol=5 * ds.err.max())


def test_simulate_requires_physical_parameters(tmp_path, capsys):
    case_path = write_valid_case(tmp_path / "c", CASE_YAML.replace("  - spinon_continuum",
                                                                   "  - paramagnon"))
    code = main(["simulate", "paramagnon", "--case", str(case_path), "--out",
                 str(tmp_path / "sim"), "--set", "g=2.1"])
    err = capsys.readouterr().err
    assert code == 2 and "must give the physical parameter" in err
