"""Guards on symbolic work and model input: a limit that is hit is reported, never ignored."""

from __future__ import annotations

import time
from pathlib import Path

import pytest

from proofkit import parse
from proofkit.analysis import Limits, survey
from proofkit.analysis.equilibria import LimitHit, solve_polynomial_system
from proofkit.cli import main
from proofkit.lang import MAX_FILE_BYTES
from proofkit.lang._checks import CHECK_SECONDS
from proofkit.lang._limits import MAX_CLAIMS, MAX_EQUILIBRIA, MAX_STATES

from .helpers import model, sym

x, y = sym("x", "y")


def test_bezout_limit_falls_back_to_an_incomplete_box_search() -> None:
    # common practice: past the limit the exact solver is not run; the box search still
    # certifies the roots it finds but cannot speak for the whole plane
    m = model("x y", [x**2 - 2, -y])
    s = survey(m, Limits(max_bezout=1))
    assert not s.complete
    assert "Bezout bound 2 exceeds the limit 1" in s.complete_reason
    assert "outside the box are not excluded" in s.complete_reason
    assert len(s.equilibria) == 2
    assert all(e.verdict in ("stable", "unstable") for e in s.equilibria)


def test_quotient_dimension_limit_is_reported() -> None:
    # computed by hand: x^3 = 2, y^3 = 3 (both irreducible) has a quotient of dimension 9 > 4
    with pytest.raises(LimitHit, match="dimension 9"):
        solve_polynomial_system(
            [x**3 - 2, y**3 - 3], [x, y], ["x", "y"], Limits(max_quotient_dim=4)
        )


def test_groebner_time_limit_is_reported() -> None:
    # common practice: a Groebner computation that runs past its time budget is stopped
    rhs = [x**7 * y**5 - 3 * x**2 + y - 1, y**7 * x**4 + 5 * x**3 - 2 * y**2 + 7]
    with pytest.raises(LimitHit, match=r"exceeded 0\.001 s"):
        solve_polynomial_system(rhs, [x, y], ["x", "y"], Limits(groebner_seconds=1e-3))


# --- model input limits (grammar/LANGUAGE.md, "Limits"): at the limit and one past it ---------
# Each past-the-limit input goes through the command line in-process: exit 2, a located
# message, well under 10 s (common practice for a documented input limit).
def _inspect(tmp_path: Path, text: str, capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    path = tmp_path / "m.pk"
    path.write_bytes(text.encode("utf-8"))
    start = time.monotonic()
    code = main(["inspect", str(path), "--json"])
    assert time.monotonic() - start < 10
    return code, capsys.readouterr().err.replace(str(path), "m.pk")


def _refused(tmp_path: Path, text: str, capsys, where: str, message: str) -> None:
    code, err = _inspect(tmp_path, text, capsys)
    assert code == 2, err
    assert err.startswith(f"m.pk:{where}: error: "), err
    assert message in err and "Traceback" not in err


def _states(n: int) -> str:
    names = [f"x{i}" for i in range(n)]
    return "state " + ", ".join(names) + "\n" + "".join(f"d{s}/dt = -{s}\n" for s in names)


def test_number_of_states(tmp_path: Path, capsys) -> None:
    assert len(parse(_states(MAX_STATES)).states) == MAX_STATES
    # the 51st name starts at column 7 + 4 * 10 + 5 * 40 = 247 (computed: "x0, ".."x9, " are
    # 4 characters, "x10, ".."x49, " 5)
    _refused(tmp_path, _states(MAX_STATES + 1), capsys, "1:247", "51 states; the limit is 50")
    _refused(tmp_path, _states(500), capsys, "1:247", "500 states")


def test_digits_of_every_exact_number(tmp_path: Path, capsys) -> None:
    # repeated squaring of a constant: 10^30 squared five times is 10^960 (allowed), once more
    # 10^1920 (computed); the product is refused before it is built
    lines = ["constant c0 = 10^30"] + [f"constant c{i} = c{i - 1}*c{i - 1}" for i in range(1, 6)]
    ok = "\n".join(lines) + "\nstate x\ndx/dt = -x + x^2/c5\n"
    assert parse(ok).constants[-1].value == 10**960
    _refused(tmp_path, ok + "constant c6 = c5*c5\n", capsys, "9:15", "limit is 1000 digits")
    _refused(tmp_path, "state x\ndx/dt = -x*(10^64)^64\n", capsys, "2:12", "1000 digits")


def test_literal_digits_and_exponent(tmp_path: Path, capsys) -> None:
    parse("state x\ndx/dt = -x + " + "9" * 1000 + "*x^2\n")
    parse("state x\ndx/dt = -x + 1e-300*x^2\n")
    _refused(
        tmp_path,
        "state x\ndx/dt = -x + " + "9" * 1001 + "*x^2\n",
        capsys,
        "2:14",
        "1001 digits; the limit is 1000",
    )
    _refused(
        tmp_path,
        "state x\ndx/dt = -x + 1e-900*x^2\n",
        capsys,
        "2:14",
        "the exponent of 1e-900 is too large; the limit is 300",
    )
    _refused(tmp_path, "state x\ndx/dt = -x + 1e-301*x^2\n", capsys, "2:14", "limit is 300")


def test_nested_exp_and_huge_exp_arguments(tmp_path: Path, capsys) -> None:
    parse("state x\ndx/dt = -x + exp(exp(x)) - exp(1)^0*exp(exp(0)) + exp(1000)*0\n")
    _refused(
        tmp_path,
        "state x\ndx/dt = -x + exp(exp(exp(x)))\n",
        capsys,
        "2:18",
        "exp is nested more than 2 levels deep",
    )
    # computed: exp(10) = 22026.47 > 1000, so the middle exp is refused first
    _refused(
        tmp_path,
        "state x\ndx/dt = -x + exp(exp(exp(10)))\n",
        capsys,
        "2:22",
        "exp of a constant beyond 1000",
    )
    _refused(
        tmp_path,
        "state x\ndx/dt = -x + exp(1001)\n",
        capsys,
        "2:18",
        "exp of a constant beyond 1000",
    )


def _claims(n: int) -> str:
    return "state x\ndx/dt = -x\nequilibrium o at x = 0\n" + "claim o stable\n" * n


def test_number_of_claims_and_equilibria(tmp_path: Path, capsys) -> None:
    assert len(parse(_claims(MAX_CLAIMS)).claims) == MAX_CLAIMS
    _refused(tmp_path, _claims(MAX_CLAIMS + 1), capsys, "104:1", "more than 100 claims")
    _refused(tmp_path, _claims(65_000), capsys, "104:1", "more than 100 claims")
    points = "".join(f"equilibrium e{i} at x = 0\n" for i in range(MAX_EQUILIBRIA))
    assert len(parse("state x\ndx/dt = -x\n" + points).equilibria) == MAX_EQUILIBRIA
    _refused(
        tmp_path,
        "state x\ndx/dt = -x\n" + points + "equilibrium e at x = 0\n",
        capsys,
        "103:1",
        "more than 100 equilibria",
    )


def test_exact_equilibrium_check_has_a_time_limit(tmp_path: Path, capsys) -> None:
    # the radicand (a - b)^2, written expanded, is zero on the whole diagonal a = b: interval
    # bisection can never show it nonnegative, so the check must stop at its time limit
    text = (
        "parameter a = 0 in [-1, 1]\nparameter b = 0 in [-1, 1]\nstate x\n"
        "dx/dt = sqrt(a^2 - 2*a*b + b^2) - x\nequilibrium e at x = sqrt(a^2 - 2*a*b + b^2)\n"
    )
    _refused(tmp_path, text, capsys, "4:14", f"time limit ({CHECK_SECONDS:g} s")


def test_bare_carriage_returns(tmp_path: Path, capsys) -> None:
    parse("state x\r\ndx/dt = -x\r\n")
    _refused(tmp_path, "state x\rdx/dt = -x\r", capsys, "1:8", "bare carriage return (CR)")
    _refused(tmp_path, "state x\r\ndx/dt = -x\rclaim\n", capsys, "2:11", "LF (or CR LF)")


def test_a_megabyte_on_one_line_ends_quickly(tmp_path: Path, capsys) -> None:
    # 50 000 words and operators are allowed; 1 MiB of "x + " is about 400 000 of them
    at_limit = "state x\ndx/dt = -x + 0*(" + "x + " * 24_990 + "x)\n"
    assert len(parse(at_limit).field) == 1
    line = "state x\ndx/dt = -x + 0*(" + "x + " * 260_000 + "x)\n"
    assert len(line) < MAX_FILE_BYTES
    # computed: token 50 001 is the '+' at column 19 + 4 * 24 994 = 99 995 of line 2
    _refused(tmp_path, line, capsys, "2:99995", "more than 50000 words, numbers and operators")
    _, err = _inspect(tmp_path, line, capsys)
    assert max(len(row) for row in err.splitlines()) < 200  # the long line is shown in part
