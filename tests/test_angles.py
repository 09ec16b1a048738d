"""Typed latitudes and longitudes: the conversions worked by hand, the forms a GPS
screen shows, display and read-back, and the errors a user can act on."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from survey.angles import format_dms, parse_angle

# Hand-worked: 45°19'05.5" = 45 + 19/60 + 5.5/3600 = 45 + 0.3166667 + 0.0015278 = 45.3181944...
DMS_45 = 45 + 19 / 60 + 5.5 / 3600
# Hand-worked: 45°19.092' = 45 + 19.092/60 = 45 + 0.3182 = 45.3182.
DM_45 = 45 + 19.092 / 60
# Hand-worked: 72°38'29.4" = 72 + 38/60 + 29.4/3600 = 72 + 0.6333333 + 0.0081667 = 72.6415.
DMS_72 = 72 + 38 / 60 + 29.4 / 3600

LATITUDES = [
    ("45.3182", 45.3182),
    ("45.3182N", 45.3182),
    ("45.3182 n", 45.3182),
    ("N45.3182", 45.3182),
    ("-43.6021", -43.6021),
    ("43.6021 S", -43.6021),
    ("-43.6021 S", -43.6021),  # a sign and a letter that agree
    ("45.3182°", 45.3182),
    ("45°19'05.5\"N", DMS_45),
    ("45°19′05.5″N", DMS_45),  # primes
    ("45º19’05.5”N", DMS_45),  # look-alikes pasted from documents
    ("45°19'05.5''N", DMS_45),  # two single quotes for seconds
    ("45 19 5.5 N", DMS_45),
    ("45 19 5.5", DMS_45),
    ("N 45° 19' 5.5\"", DMS_45),
    ("45d19m5.5s", DMS_45),
    ("45d19m5.5sN", DMS_45),
    ("45d19m5.5s S", -DMS_45),
    ("45 deg 19 min 5.5 sec north", DMS_45),
    ("45 19 5.5 s", -DMS_45),  # no letter units: s is south
    ("45 19.092 N", DM_45),
    ("N45°19.092'", DM_45),
    ("45°19.092′S", -DM_45),
    ("−45 19.092", -DM_45),  # a typographic minus
    ("90 S", -90.0),
    ("0", 0.0),
]
LONGITUDES = [
    ("-72.6415", -72.6415),
    ("72.6415 W", -72.6415),
    ("72.6415w", -72.6415),
    ("W 72.6415", -72.6415),
    ("171.1847 E", 171.1847),
    ("72°38'29.4\"W", -DMS_72),
    ("72 38 29.4 W", -DMS_72),
    ("E 171° 11.082'", 171 + 11.082 / 60),
    ("180 W", -180.0),
    ("180", 180.0),
]


@pytest.mark.parametrize("text,value", LATITUDES)
def test_latitudes(text, value):
    assert parse_angle(text, "latitude") == pytest.approx(value, abs=1e-12)


@pytest.mark.parametrize("text,value", LONGITUDES)
def test_longitudes(text, value):
    assert parse_angle(text, "longitude") == pytest.approx(value, abs=1e-12)


def test_hand_worked_values():
    assert DMS_45 == pytest.approx(45.3181944444, abs=1e-10)
    assert DM_45 == pytest.approx(45.3182, abs=1e-12)
    assert DMS_72 == pytest.approx(72.6415, abs=1e-12)


def test_format_dms_by_hand():
    # 45.3182: 0.3182 * 60 = 19.092'; 0.092 * 60 = 5.52" -> 45°19′05.5″N (hand-worked).
    assert format_dms(45.3182, "latitude") == "45°19′05.5″N"
    # -72.6415: 0.6415 * 60 = 38.49'; 0.49 * 60 = 29.4" -> 72°38′29.4″W.
    assert format_dms(-72.6415, "longitude") == "72°38′29.4″W"
    # -43.6021: 0.6021 * 60 = 36.126'; 0.126 * 60 = 7.56" -> 07.6".
    assert format_dms(-43.6021, "latitude") == "43°36′07.6″S"
    # 171.1847: 0.1847 * 60 = 11.082'; 0.082 * 60 = 4.92" -> 04.9".
    assert format_dms(171.1847, "longitude") == "171°11′04.9″E"
    # Rounding carries: 59.99" rounds to 60.0" and becomes the next minute/degree.
    assert format_dms(10 + 59 / 60 + 59.99 / 3600, "latitude") == "11°00′00.0″N"
    assert format_dms(-0.0, "latitude") == "0°00′00.0″N"
    assert format_dms(-180.0, "longitude") == "180°00′00.0″W"
    with pytest.raises(ValueError, match="latitude must be within -90 to 90"):
        format_dms(91.0, "latitude")


@settings(max_examples=300, deadline=None)
@given(st.sampled_from(["latitude", "longitude"]), st.floats(-1.0, 1.0))
def test_format_then_parse_is_within_half_a_tenth_of_a_second(kind, fraction):
    value = fraction * (90.0 if kind == "latitude" else 180.0)
    back = parse_angle(format_dms(value, kind), kind)
    assert abs(back - value) * 3600.0 <= 0.05 + 1e-9  # the display rounds to 0.1"


ERRORS = [
    ("latitude", "45 60 0", "minutes must be below 60"),
    ("latitude", "45 19 60", "seconds must be below 60"),
    ("latitude", "45°61.5'", "minutes must be below 60"),
    ("latitude", "45 E", "use N or S for a latitude"),
    ("longitude", "72 N", "use E or W for a longitude"),
    ("latitude", "91", "latitude must be within -90 to 90"),
    ("latitude", "-90.5", "latitude must be within -90 to 90"),
    ("longitude", "180 0 1 E", "longitude must be within -180 to 180"),
    ("latitude", "-45 N", "say different things"),
    ("latitude", "+45 S", "say different things"),
    ("latitude", "45.5 30", "only the last part may have decimals"),
    ("latitude", "45 19.5 30", "only the last part may have decimals"),
    ("latitude", "45,3182", "use a point for decimals: 45.3182"),
    ("latitude", "45.3182, -72.6415", "no commas"),
    ("latitude", "", "enter a latitude"),
    ("latitude", "   ", "enter a latitude"),
    ("latitude", "N 45 N", "give N or S once"),
    ("latitude", "45 N 19", "before or after the number"),
    ("latitude", "45 19 5 4", "too many numbers"),
    ("latitude", "45\"", "give minutes before seconds"),
    ("latitude", "°45", "must follow a number"),
    ("latitude", "45 - 3", "a sign goes only at the start"),
    ("latitude", "forty-five", "unexpected"),
    ("latitude", "45x", "unexpected"),
    ("latitude", "N", "enter the latitude's degrees"),
    ("latitude", "45' 30\"", "give degrees before minutes"),
    ("height", "45", "kind must be latitude or longitude"),
]


@pytest.mark.parametrize("kind,text,message", ERRORS)
def test_errors_say_what_to_fix(kind, text, message):
    with pytest.raises(ValueError) as exc:
        parse_angle(text, kind)
    assert message in str(exc.value) and "\n" not in str(exc.value)
