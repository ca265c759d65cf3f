"""Association table reader: units, validation messages naming row and column."""

import numpy as np
import pytest

from kinage.associations import draw_associations, read_associations
from kinage.errors import InputError

HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")
ROW_A = "Lyra Nova-1,35.0,-40.0,400,20,-5,0.5,6,0.5,20,3,25,15"  # invented, high southern latitude (l 254, b -68): no known association there
ROW_B = "Cetra-2,150.0,-55.0,600,30,-7,0.5,3,0.5,10,3,30,10"


def _write(tmp_path, text, name="a.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_csv_default_units(tmp_path):
    t = read_associations(_write(tmp_path, "\n".join([HEADER, ROW_A, ROW_B]) + "\n"))
    assert t.names == ["Lyra Nova-1", "Cetra-2"]
    assert t[0].distance == 400 and t[1].age == 10 and t[0].ra_error == 0


def test_ecsv_units_are_converted(tmp_path):
    import astropy.units as u
    from astropy.table import Table

    tab = Table.read("\n".join([HEADER, ROW_A]), format="ascii.csv")
    tab["distance"] = tab["distance"] / 1000.0 * u.kpc
    tab["distance_error"] = tab["distance_error"] / 1000.0 * u.kpc
    tab["age"] = tab["age"] * 1e6 * u.yr
    tab["radius"] = tab["radius"] * u.pc
    p = tmp_path / "a.ecsv"
    tab.write(p, format="ascii.ecsv")
    t = read_associations(p)
    assert t[0].distance == pytest.approx(400) and t[0].age == pytest.approx(15)


@pytest.mark.parametrize("row, col", [
    ("Lyra Nova-1,35.0,-40.0,-400,20,-5,0.5,6,0.5,20,3,25,15", "distance"),
    ("Lyra Nova-1,35.0,-40.0,400,20,-5,0.5,6,0.5,20,3,-25,15", "radius"),
    ("Lyra Nova-1,35.0,-40.0,400,20,-5,0.5,nan,0.5,20,3,25,15", "pm_dec"),
    ("Lyra Nova-1,35.0,-40.0,400,20,-5,0.5,6,0.5,,3,25,15", "radial_velocity"),
    ("Lyra Nova-1,35.0,-40.0,400,20,-5,0.5,6,0.5,20,3,25,0", "age"),
    ("Lyra Nova-1,35.0,-40.0,400,-20,-5,0.5,6,0.5,20,3,25,15", "distance_error"),
])
def test_bad_values_name_row_and_column(tmp_path, row, col):
    with pytest.raises(InputError) as exc:
        read_associations(_write(tmp_path, "\n".join([HEADER, ROW_B, row]) + "\n"))
    msg = str(exc.value)
    assert "row 2" in msg and f"column '{col}'" in msg


def test_missing_column_and_duplicates(tmp_path):
    with pytest.raises(InputError, match="missing column.*'age'"):
        read_associations(_write(tmp_path, HEADER.rsplit(",", 1)[0] + "\n" + ROW_A.rsplit(",", 1)[0] + "\n"))
    with pytest.raises(InputError, match="duplicate name 'Lyra Nova-1'.*row 1"):
        read_associations(_write(tmp_path, "\n".join([HEADER, ROW_A, ROW_A]) + "\n"))


def test_association_draws_scatter_as_given(tmp_path):
    t = read_associations(_write(tmp_path, "\n".join([HEADER, ROW_A, ROW_B]) + "\n"))
    dr = draw_associations(t, 4000, np.random.default_rng(0))
    rows = dr.rows(1)
    assert np.std(dr.pm_ra_cosdec[rows]) == pytest.approx(0.5, rel=0.05)
    assert np.mean(dr.distance_pc[rows]) == pytest.approx(600, rel=0.01)
    assert dr.radius_pc.tolist() == [25, 30]


def test_error_columns_are_optional(tmp_path):
    # an association table without uncertainty columns: the centres are then exact (errors 0)
    from kinage.associations import read_associations

    p = tmp_path / "groups.csv"
    p.write_text("name,ra,dec,distance,pm_ra_cosdec,pm_dec,radial_velocity,radius,age\n"
                 "Test Group A,150.0,-40.0,300,-10,5,10,20,10\n")
    t = read_associations(p)
    assert t[0].distance_error == 0 and t[0].pm_dec_error == 0 and t[0].radius == 20
