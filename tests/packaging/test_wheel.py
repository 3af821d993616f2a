"""A normal (non-editable) install, as from a wheel, runs a study: the wheel is built from the
checkout, installed into a fresh virtual environment with no path to the checkout, and
``sinkopt init``, ``check``, a 20-trial ``run`` and ``--version`` are run from there.

The new environment takes sinkopt's dependencies from the running interpreter's site-packages
(a ``.pth`` line; no download), but not the checkout: the test asserts that the package it runs
is the installed one.
"""
import json
import os
import site
import subprocess
import sys
import sysconfig
import venv
from pathlib import Path

import pytest

import sinkopt

ROOT = Path(__file__).resolve().parents[2]
pytestmark = pytest.mark.slow


def _run(cmd, cwd, env, timeout=300):
    res = subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert res.returncode == 0, f"{cmd} -> {res.returncode}\n{res.stdout[-2000:]}\n{res.stderr[-3000:]}"
    return res


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("wheel")
    dist = tmp / "dist"
    # --no-build-isolation: the build backend (setuptools) comes from this environment, so the
    # test needs no network; the wheel is the same one an isolated build makes.
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation",
          "-w", str(dist), str(ROOT)], cwd=tmp, env=os.environ.copy())
    wheels = list(dist.glob("sinkopt-*.whl"))
    assert len(wheels) == 1, wheels

    env_dir = tmp / "env"
    venv.EnvBuilder(with_pip=False).create(env_dir)
    py = env_dir / "bin" / "python"
    new_site = Path(subprocess.run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                                   capture_output=True, text=True, check=True).stdout.strip())
    # Dependencies from here; a bare path line processes none of this site's .pth files, so the
    # editable finder of the checkout is not installed in the new environment.
    deps = [p for p in site.getsitepackages() + [sysconfig.get_paths()["purelib"]]
            if Path(p).is_dir()]
    (new_site / "zz_sinkopt_test_deps.pth").write_text("\n".join(dict.fromkeys(deps)) + "\n")
    _run([sys.executable, "-m", "pip", "--python", str(py), "install", "--no-deps",
          "--no-index", str(wheels[0])], cwd=tmp, env=os.environ.copy())
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "VIRTUAL_ENV")}
    env["PATH"] = f"{env_dir / 'bin'}{os.pathsep}{env.get('PATH', '')}"
    work = tmp / "work"
    work.mkdir()
    return py, env, work, new_site


def test_the_installed_package_is_the_wheel_not_the_checkout(installed):
    py, env, work, new_site = installed
    res = _run([str(py), "-c", "import sinkopt, sys; print(sinkopt.__file__)"], work, env)
    path = Path(res.stdout.strip()).resolve()
    assert path.is_relative_to(new_site.resolve()), path
    assert not path.is_relative_to(ROOT), path


def test_version(installed):
    py, env, work, _ = installed
    res = _run([str(py), "-m", "sinkopt", "--version"], work, env)
    assert res.stdout.strip() == f"sinkopt {sinkopt.__version__}"


def test_init_check_and_run_from_the_wheel(installed):
    py, env, work, _ = installed
    _run([str(py), "-m", "sinkopt", "init", "starter"], work, env)
    res = _run([str(py), "-m", "sinkopt", "check", "starter/study.toml"], work, env)
    assert "fan" in res.stdout
    res = _run([str(py), "-m", "sinkopt", "run", "starter/study.toml", "--trials", "20",
                "--seed", "1", "--out", "out", "--no-progress"], work, env, timeout=600)
    run = json.loads((work / "out" / "run.json").read_text())
    assert (work / "out" / "report.html").stat().st_size > 0
    assert len((work / "out" / "trials.csv").read_text().splitlines()) == 1 + 20
    assert run  # versions, seed, command


def test_the_wheel_carries_the_catalogs_and_report_assets(installed):
    py, env, work, _ = installed
    code = ("from sinkopt.study.catalogs import builtin_catalog, materials; "
            "from importlib import resources; "
            "print(len(materials()), sorted(p.name for p in (builtin_catalog() / 'fans').iterdir()), "
            "resources.files('sinkopt.results').joinpath('report_assets', 'report.js').is_file())")
    res = _run([str(py), "-c", code], work, env)
    assert "demo-axial-60.csv" in res.stdout and res.stdout.strip().endswith("True")
