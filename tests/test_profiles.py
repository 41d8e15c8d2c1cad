"""Profiles load, are checked on load, and a user's own file wins over a built-in one."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from inspectkit.model import ProtectionLevel, Quantity
from inspectkit.profiles import (
    ProfileError,
    builtin_profiles_dir,
    load_all_profiles,
    load_profile,
    user_profiles_dir,
)

BUILTIN = ("iec-62305-3", "nfpa-780", "bs-6651-practice")


def test_every_builtin_profile_loads() -> None:
    profiles = load_all_profiles()
    assert set(BUILTIN) <= set(profiles)
    for profile in profiles.values():
        assert profile.interval is not None or set(profile.intervals) == set(ProtectionLevel)


def test_nfpa_780_has_no_protection_levels_and_one_period_for_every_site() -> None:
    # NFPA 780 does not use protection levels I–IV (docs/sources.md, "NFPA 780").
    nfpa = load_profile("nfpa-780")
    assert not nfpa.levels and nfpa.intervals == {}
    periods = {nfpa.intervals_for(level) for level in ProtectionLevel}
    assert len(periods) == 1
    # Annex D: visual every year, complete every 3-5 years (from memory).
    (only,) = periods
    assert only.visual_months == 12 and 36 <= only.complete_months <= 60
    assert "NFPA 780" in nfpa.interval_basis(ProtectionLevel.II)
    # Its own terms instead: Class I materials up to about 23 m, Class II above (as
    # commonly quoted); no "LPL".
    assert nfpa.grading(ProtectionLevel.II, 15.0) == (
        "Material class",
        "Class I (structure up to 23 m)",
    )
    assert nfpa.grading(ProtectionLevel.II, 40.0)[1].startswith("Class II")
    assert "LPL" not in nfpa.grading(ProtectionLevel.I, None)[1]
    assert load_profile("iec-62305-3").grading(ProtectionLevel.II, 15.0) == (
        "Protection level",
        "LPL II",
    )


def test_nfpa_780_earth_figures_are_not_attributed_to_nfpa_780() -> None:
    text = (builtin_profiles_dir() / "nfpa-780.toml").read_text(encoding="utf-8")
    for line in text.splitlines():
        if line.startswith(("earth_isolated", "earth_combined")):
            assert "our default" in line, line


def test_bs_6651_practice_is_a_fixed_interval_whatever_the_level() -> None:
    # BS 6651 practice: at most 12 months between inspections whatever the level
    # (from memory of the old standard; docs/sources.md, "BS 6651").
    bs = load_profile("bs-6651-practice")
    assert {bs.intervals_for(level).visual_months for level in ProtectionLevel} == {12}
    assert {bs.intervals_for(level).complete_months for level in ProtectionLevel} == {12}
    assert bs.interval_basis(ProtectionLevel.IV) == "BS 6651 practice: fixed 12-month interval"


def test_a_profile_gives_either_one_interval_or_one_per_level(tmp_path) -> None:
    from inspectkit.profiles import load_profile_file

    text = (builtin_profiles_dir() / "bs-6651-practice.toml").read_text(encoding="utf-8")
    both = tmp_path / "both.toml"
    both.write_text(
        text + "\n[intervals.I]\nvisual_months = 12\ncomplete_months = 24\n"
        "critical_complete_months = 12\n",
        encoding="utf-8",
    )
    with pytest.raises(ProfileError, match="not both"):
        load_profile_file(both)
    neither = tmp_path / "neither.toml"
    neither.write_text(text.replace("[interval]", "[unused]"), encoding="utf-8")
    with pytest.raises(ProfileError):
        load_profile_file(neither)


def test_every_number_in_a_builtin_profile_names_its_source() -> None:
    """Each figure carries a clause, `common practice`, `from memory` or `our default`."""
    words = ("table", "clause", "annex", "common practice", "from memory", "our default", "bs 6651")
    for path in builtin_profiles_dir().glob("*.toml"):
        for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            value = line.split("=", 1)[1].split("#")[0] if "=" in line else ""
            if re.match(r'\s*"?[\d.]', value):
                comment = line.split("#", 1)[1].lower() if "#" in line else ""
                assert any(w in comment for w in words), f"{path.name}:{number} has no source"


def test_limits_are_read_with_their_units() -> None:
    iec = load_profile("iec-62305-3")
    # IEC 62305-3 clause 5.4: earth-termination system ≤ 10 Ω (as quoted).
    assert iec.limit_for(Quantity.EARTH_COMBINED) == pytest.approx(10.0)
    assert iec.limit_for(Quantity.CONTINUITY) == pytest.approx(0.2)
    assert iec.limit_for(Quantity.SOIL_RESISTIVITY) is None


def test_ten_times_the_number_of_electrodes() -> None:
    # BS 6651 practice: each electrode ≤ 10 Ω × number of electrodes; 15 electrodes → 150 Ω.
    bs = load_profile("bs-6651-practice")
    assert bs.limit_for(Quantity.EARTH_ISOLATED, electrode_count=15) == pytest.approx(150.0)


def write_user_profile(name: str, text: str) -> Path:
    folder = user_profiles_dir()
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def builtin_text(name: str) -> str:
    return (builtin_profiles_dir() / f"{name}.toml").read_text(encoding="utf-8")


def test_a_user_profile_wins_over_the_builtin_one() -> None:
    text = builtin_text("iec-62305-3").replace('earth_combined = "10 Ω"', 'earth_combined = "5 Ω"')
    write_user_profile("iec-62305-3", text)
    assert load_profile("iec-62305-3").limits.earth_combined == pytest.approx(5.0)


def test_a_missing_interval_names_the_file_and_key() -> None:
    text = builtin_text("iec-62305-3").replace(
        "visual_months = 24              # Table E.2: levels III and IV, visual, 2 years\n"
        "complete_months = 48",
        "complete_months = 48",
        1,
    )
    path = write_user_profile(
        "site-rules", text.replace('name = "iec-62305-3"', 'name = "site-rules"')
    )
    with pytest.raises(ProfileError) as caught:
        load_profile("site-rules")
    assert str(path) in str(caught.value)
    assert "intervals.III.visual_months: missing" in str(caught.value)


def test_a_limit_in_the_wrong_unit_names_the_file_and_key() -> None:
    text = builtin_text("iec-62305-3").replace('continuity = "0.2 Ω"', 'continuity = "0.2 Ω·m"')
    path = write_user_profile(
        "wrong-unit", text.replace('name = "iec-62305-3"', 'name = "wrong-unit"')
    )
    with pytest.raises(ProfileError) as caught:
        load_profile("wrong-unit")
    assert str(path) in str(caught.value)
    assert "limits.continuity" in str(caught.value)


def test_a_name_that_does_not_match_the_file() -> None:
    write_user_profile("mine", builtin_text("nfpa-780"))
    with pytest.raises(ProfileError, match="must match the file name"):
        load_profile("mine")


def test_an_unknown_profile_lists_the_known_ones() -> None:
    with pytest.raises(ProfileError, match="known profiles: .*iec-62305-3"):
        load_profile("nope")


def test_broken_toml() -> None:
    path = write_user_profile("broken", "name = [")
    with pytest.raises(ProfileError, match="not valid TOML"):
        load_profile("broken")
    assert path.exists()


def test_the_site_form_does_not_ask_a_level_of_a_site_whose_standard_has_none() -> None:
    from inspectkit.model import Site
    from inspectkit.tui.dialogs.editors import site_dialog

    nfpa = site_dialog(Site(name="Grain Store", protection_level="IV", profile="nfpa-780"))
    iec = site_dialog(Site(name="Depot", protection_level="II", profile="iec-62305-3"))
    assert "protection_level" not in [f.name for f in nfpa.fields]
    assert "protection_level" in [f.name for f in iec.fields]
