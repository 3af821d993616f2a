"""Interface materials carry names of the trade, not product names (issue: the soft sheet was
named like a product line). The soft, compliant sheet is a "gap filler"."""
import pytest

from sinkopt.errors import InputError
from sinkopt.study.catalogs import interface, interfaces


def test_the_soft_sheet_is_a_gap_filler():
    assert interface("gap-filler").specific_resistance == pytest.approx(2.0e-4)
    assert "gap-pad" not in interfaces()
    with pytest.raises(InputError, match="did you mean 'gap-filler'"):
        interface("gap-fill")


def test_init_writes_the_default_sampler(tmp_path):
    from sinkopt.cli.main import main
    from sinkopt.model.problem import DEFAULT_SAMPLER
    from sinkopt.study.reader import load_study

    assert main(["init", str(tmp_path)]) == 0
    assert load_study(tmp_path / "study.toml").sampler == DEFAULT_SAMPLER == "tpe-refine"
