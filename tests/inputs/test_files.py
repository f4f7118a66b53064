"""Bounded reading of user files: regular files only, the size cap, short printable excerpts in messages."""

# common practice, no published source: these limits are planetfit's own (issue 29); no physics is checked.

import pytest

from planetfit.core.errors import InputError
from planetfit.inputs import files
from planetfit.inputs.tables import read_table


def test_excerpts_are_short_and_printable():
    assert files.excerpt("time") == "time"
    assert files.excerpt("a\x00b\x1b[31m") == "a\\x00b\\x1b[31m"  # control characters escaped, never sent raw
    long = files.excerpt("s" * 10_000)
    assert long == "s" * files.EXCERPT_CHARS + "..."
    assert files.excerpts([f"c{i}" for i in range(20)]) == "c0, c1, c2, c3, c4, c5, c6, c7 and 12 more"


def test_a_table_header_is_quoted_in_part_only(tmp_path):
    secret = "x" * 200
    (tmp_path / "t.csv").write_text(f"a,{secret},b\n1,2,3\n")
    with pytest.raises(InputError) as err:
        read_table(tmp_path / "t.csv", {"time": "time"})
    assert secret not in err.value.message() and "x" * files.EXCERPT_CHARS + "..." in err.value.message()


def test_the_size_cap_names_the_key_that_lifts_it(tmp_path):
    (tmp_path / "t.csv").write_text("time,flux\n" + "1,2\n" * 100_000)  # 0.4 MB
    with pytest.raises(InputError, match="max_file_mb") as err:
        read_table(tmp_path / "t.csv", {"time": "time"}, key_prefix="photometry[0].", max_mb=0.1)
    assert err.value.key == "photometry[0].file"
    assert read_table(tmp_path / "t.csv", {"time": "time"}, max_mb=1.0).rows_read == 100_000
