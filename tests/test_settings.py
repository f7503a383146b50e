"""Settings given two ways to ``audit()`` must agree; one given once is used as given."""

import pytest

import featureaudit as fa
from featureaudit.errors import SettingError
from featureaudit.settings import Settings
from featureaudit.testing import noise_frame


@pytest.mark.parametrize(
    ("keyword", "value", "settings"),
    [
        ("seed", 3, Settings(seed=5)),
        ("seed", 3, Settings()),  # the default seed 0 is a seed too
        ("engine", "stream", Settings(engine="memory")),
        ("sample_rows", 500, Settings(sample_rows=1000)),
    ],
)
def test_a_keyword_that_disagrees_with_settings_is_an_error(keyword, value, settings):
    with pytest.raises(SettingError, match=rf"{keyword}=.* and settings\.{keyword}=.*disagree"):
        fa.audit(noise_frame(), target="y", settings=settings, **{keyword: value})


def test_a_setting_given_once_or_twice_alike_is_used():
    frame = noise_frame()
    one = fa.audit(frame, target="y", split_column="split", seed=4, probes=["twins"])
    two = fa.audit(
        frame,
        target="y",
        split_column="split",
        seed=4,
        settings=Settings(seed=4),
        probes=["twins"],
    )
    three = fa.audit(
        frame, target="y", split_column="split", settings=Settings(seed=4), probes=["twins"]
    )
    assert one.document["settings"]["seed"] == two.document["settings"]["seed"] == 4
    assert three.document["settings"]["seed"] == 4
    # a seed outside [0, 2**31 - 1) is mapped the same way on both doors
    fa.audit(frame, target="y", seed=2**40, settings=Settings(seed=2**40), probes=["twins"])
