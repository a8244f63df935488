"""Lot history from the store: yields, mean and spread, process capability (Cpk), filters, several
stores added together, worst units; against hand-computed numbers and numpy on the stored values."""

from __future__ import annotations

import hashlib
import math
from datetime import datetime

import numpy as np
import pytest

from matchtool import batch, history, store
from matchtool.batch import CheckedUnit
from matchtool.errors import InputError, UsageError
from matchtool.spec import RequirementResult, UnitResult, parse_spec

SPEC = '[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'


def rl_req(rl_db: float, limit: float = 10.0) -> RequirementResult:
    return RequirementResult(name="ism", key="min_return_loss_db", passed=rl_db >= limit, limit=limit, worst=rl_db,
                             worst_f_hz=902e6, margin_db=rl_db - limit, f_low_hz=902e6, f_high_hz=928e6,
                             worst_return_loss_db=rl_db, samples=27)


def vswr_req(v: float, limit: float = 2.0) -> RequirementResult:
    rl = -20 * math.log10((v - 1) / (v + 1))
    rl_lim = -20 * math.log10((limit - 1) / (limit + 1))
    return RequirementResult(name="guard", key="max_vswr", passed=v <= limit, limit=limit, worst=v, worst_f_hz=935e6,
                             margin_db=rl - rl_lim, f_low_hz=890e6, f_high_hz=940e6, worst_return_loss_db=rl, samples=51)


def res_req(f: float) -> RequirementResult:
    m = min(f - 905e6, 925e6 - f)
    return RequirementResult(name="resonance", key="resonance", passed=m >= 0, limit=None, worst=f, worst_f_hz=f,
                             margin_db=None, f_low_hz=905e6, f_high_hz=925e6, margin_hz=m, samples=201)


def unit(name: str, *reqs: RequirementResult, best_f: float = 915e6, error: str | None = None) -> CheckedUnit:
    u = UnitResult(file=name, passed=error is None and all(r.passed for r in reqs), requirements=() if error else reqs,
                   error=error, best_f_hz=None if error else best_f, best_return_loss_db=None if error else 20.0)
    return CheckedUnit(u, sha256=None if error else hashlib.sha256(name.encode()).hexdigest())


@pytest.fixture
def spec(tmp_path):
    p = tmp_path / "spec.toml"
    p.write_text(SPEC)
    return parse_spec(SPEC, p)


def put(db, units, spec, lot="lot1", station="a", when=None):
    with store.Store(str(db)) as st:
        return st.add_lot(units, spec, lot, station, checked_at=when)


def test_cpk_hand_computed():
    # derived: values 10.5, 11, 12, 11.5, 12.5 dB -> mean 11.5, deviations -1, -0.5, 0.5, 0, 1,
    # s = sqrt(2.5 / 4) = 0.790569; Cpk against LSL 10 dB = (11.5 - 10) / (3 * 0.790569) = 0.632456
    # (one-sided form, NIST/SEMATECH e-Handbook of Statistical Methods sec. 6.1.6)
    assert history.cpk(11.5, math.sqrt(2.5 / 4), lsl=10) == pytest.approx(0.632456, abs=1e-6)
    # two-sided: mean 915, s 2, window 905..925 -> min(10/6, 10/6) = 1.6667; shifted mean 917 -> 8/6
    assert history.cpk(915, 2, lsl=905, usl=925) == pytest.approx(10 / 6)
    assert history.cpk(917, 2, lsl=905, usl=925) == pytest.approx(8 / 6)


def test_stored_lot_matches_the_hand_example(tmp_path, spec):
    db = tmp_path / "r.db"
    put(db, [unit(f"u{k}.s1p", rl_req(v)) for k, v in enumerate([10.5, 11, 12, 11.5, 12.5])], spec)
    (lt,) = history.history([str(db)]).lots
    (r,) = lt.requirements
    assert (r.mean, r.std) == pytest.approx((11.5, math.sqrt(2.5 / 4)))
    assert r.cpk == pytest.approx(0.632456, abs=1e-6) and r.cpk_side == "lower"  # derived above


def test_statistics_equal_numpy_on_the_stored_values(tmp_path, spec):
    rng = np.random.default_rng(3)
    rl = rng.normal(14.0, 1.5, 300)
    vs = rng.uniform(1.2, 2.3, 300)
    fr = rng.normal(915e6, 3e6, 300)
    units = [unit(f"u{k}.s1p", rl_req(rl[k]), vswr_req(vs[k]), res_req(fr[k]), best_f=fr[k]) for k in range(300)]
    db = tmp_path / "r.db"
    put(db, units, spec)
    (lt,) = history.history([str(db)]).lots
    ism, guard, res = lt.requirements
    # numpy on the values the test stored (sample standard deviation, ddof=1)
    assert ism.mean == pytest.approx(rl.mean(), rel=1e-12) and ism.std == pytest.approx(rl.std(ddof=1), rel=1e-9)
    assert ism.cpk == pytest.approx((rl.mean() - 10) / (3 * rl.std(ddof=1)), rel=1e-9)
    assert guard.cpk_side == "upper" and guard.cpk == pytest.approx((2.0 - vs.mean()) / (3 * vs.std(ddof=1)), rel=1e-9)
    s = fr.std(ddof=1)
    assert res.cpk_side == "two-sided"
    assert res.cpk == pytest.approx(min(925e6 - fr.mean(), fr.mean() - 905e6) / (3 * s), rel=1e-6)
    assert lt.resonance_mean_hz == pytest.approx(fr.mean(), rel=1e-12)
    assert lt.resonance_std_hz == pytest.approx(s, rel=1e-6)
    assert (lt.resonance_min_hz, lt.resonance_max_hz) == (fr.min(), fr.max())
    assert ism.passed == int((rl >= 10).sum()) and guard.passed == int((vs <= 2).sum())
    assert lt.units == 300 and lt.passed == sum(u.result.passed for u in units)


def test_cpk_refused_below_five_units_and_when_the_limit_changed(tmp_path, spec):
    db = tmp_path / "r.db"
    put(db, [unit(f"u{k}.s1p", rl_req(11 + k)) for k in range(4)], spec)
    (r,) = history.history([str(db)]).lots[0].requirements
    assert r.cpk is None and "fewer than 5" in r.cpk_reason and r.mean == pytest.approx(12.5)
    put(db, [unit(f"v{k}.s1p", rl_req(11 + k, limit=9.0)) for k in range(4)], spec)
    (r,) = history.history([str(db)]).lots[0].requirements
    assert r.cpk is None and "limit changed" in r.cpk_reason and r.n_values == 8


def test_filters_lot_since_and_spec(tmp_path, spec):
    db = tmp_path / "r.db"
    put(db, [unit(f"a{k}.s1p", rl_req(12)) for k in range(3)], spec, lot="lot11", when=datetime(2026, 10, 1, 8))
    put(db, [unit(f"b{k}.s1p", rl_req(9 + k)) for k in range(4)], spec, lot="lot12", when=datetime(2026, 11, 5, 8))
    h = history.history([str(db)])
    assert [lt.lot for lt in h.lots] == ["lot11", "lot12"]  # in order of their first check
    assert [lt.lot for lt in history.history([str(db)], lot="lot12").lots] == ["lot12"]
    assert [lt.lot for lt in history.history([str(db)], since="2026-11-01").lots] == ["lot12"]
    assert history.history([str(db)], spec="other").lots == ()
    assert len(history.history([str(db)], spec="spec").lots) == 2
    with pytest.raises(UsageError, match="not a date"):
        history.history([str(db)], since="last tuesday")


def test_several_stores_add_up_like_one(tmp_path, spec):
    rng = np.random.default_rng(5)
    rl = rng.normal(11, 1.2, 40)
    units = [unit(f"u{k}.s1p", rl_req(rl[k]), res_req(915e6 + 1e5 * k), best_f=915e6 + 1e5 * k) for k in range(40)]
    put(tmp_path / "all.db", units, spec)
    for k in range(3):
        put(tmp_path / f"s{k}.db", batch.select_shard(units, (k + 1, 3)), spec)
    one = history.history([str(tmp_path / "all.db")]).lots[0]
    three = history.history([str(tmp_path / f"s{k}.db") for k in range(3)])
    (merged,) = three.lots
    assert not three.warnings
    assert (merged.units, merged.passed, merged.failed) == (one.units, one.passed, one.failed)
    for a, b in zip(one.requirements, merged.requirements, strict=True):
        assert (a.evaluated, a.passed, a.n_values) == (b.evaluated, b.passed, b.n_values)
        assert (a.mean, a.std, a.cpk) == pytest.approx((b.mean, b.std, b.cpk), rel=1e-9)
    assert [w.file for w in one.worst] == [w.file for w in merged.worst]
    # the same store twice: said, not silently double-counted without a word
    twice = history.history([str(tmp_path / "all.db"), str(tmp_path / "all.db")])
    assert twice.warnings and "more than one store" in twice.warnings[0]


def test_worst_units_equal_the_check_summary(tmp_path, spec):
    rng = np.random.default_rng(9)
    units = [unit(f"u{k}.s1p", rl_req(rng.uniform(8, 14)), res_req(rng.uniform(900e6, 930e6))) for k in range(30)]
    units.append(unit("open.s1p", rl_req(2.14), res_req(915e6)))
    put(tmp_path / "r.db", units, spec)
    (lt,) = history.history([str(tmp_path / "r.db")]).lots
    expect = batch.worst_units([u.result for u in units])
    assert [(w.file, w.requirement) for w in lt.worst] == [(w.file, w.requirement) for w in expect]
    assert lt.worst[0].file == "open.s1p"


def test_a_unit_worst_at_two_requirements_is_listed_under_both(tmp_path, spec):
    # "big": ism 6 dB against 10 (margin -4 dB, derived) and best match 947.75 MHz, 22.75 MHz above
    # the 905-925 MHz window (derived); "mid" misses the window by 7.75 MHz and ism by 1.27 dB
    units = [unit("big.s1p", rl_req(6.0), res_req(947.75e6)), unit("mid.s1p", rl_req(8.73), res_req(897.25e6)),
             unit("ok.s1p", rl_req(15.0), res_req(915e6))]
    put(tmp_path / "r.db", units, spec)
    (lt,) = history.history([str(tmp_path / "r.db")]).lots
    per = [(w.requirement, w.file, w.margin_db, w.margin_hz) for w in lt.worst if w.ranked_by == "requirement"]
    assert per == [("ism", "big.s1p", pytest.approx(-4.0), None), ("resonance", "big.s1p", None, pytest.approx(-22.75e6))]
    assert [(w.file, w.ranked_by) for w in lt.worst[2:]] == [("mid.s1p", "relative_margin")]
    expect = batch.worst_units([u.result for u in units])
    assert [(w.file, w.requirement, w.ranked_by) for w in lt.worst] == [(w.file, w.requirement, w.ranked_by)
                                                                        for w in expect]


def test_unreadable_units_count_as_in_check(tmp_path, spec):
    units = [unit("a.s1p", rl_req(12)), unit("b.s1p", rl_req(8)), unit("gone.s1p", error="gone.s1p: no such file")]
    put(tmp_path / "r.db", units, spec)
    (lt,) = history.history([str(tmp_path / "r.db")]).lots
    s = batch.summarize_lot([u.result for u in units])
    assert (lt.units, lt.passed, lt.failed, lt.errors) == (s.units, s.passed, s.failed, s.errors) == (3, 1, 1, 1)
    assert lt.requirements[0].evaluated == s.yields[0].evaluated == 2


def test_a_missing_store_is_not_created(tmp_path):
    with pytest.raises(InputError, match="no such store"):
        history.history([str(tmp_path / "nothing.db")])
    assert not (tmp_path / "nothing.db").exists()


def test_running_statistics_equal_a_recount_from_the_unit_rows(tmp_path, spec):
    # the per-day running statistics (kept by each write) against the aggregates recomputed from
    # the unit rows (used for a --since with a time of day); several writes into one lot and day
    rng = np.random.default_rng(21)
    db = tmp_path / "r.db"
    vals = []
    for run in range(4):
        rl = rng.normal(12, 2, 17)
        vals += list(rl)
        put(db, [unit(f"r{run}u{k}.s1p", rl_req(rl[k]), res_req(915e6 + rng.normal(0, 4e6))) for k in range(17)],
            spec, station=f"s{run % 2}", when=datetime(2026, 11, 5, 9 + run))
    fast = history.history([str(db)], since="2026-11-05").lots[0]
    slow = history.history([str(db)], since="2026-11-05T00:00:01").lots[0]
    assert (fast.units, fast.passed, fast.resonance_n) == (slow.units, slow.passed, slow.resonance_n) == (68, fast.passed, 68)
    for a, b in zip(fast.requirements, slow.requirements, strict=True):
        assert (a.evaluated, a.passed, a.n_values, a.min, a.max) == (b.evaluated, b.passed, b.n_values, b.min, b.max)
        assert (a.mean, a.std, a.cpk) == pytest.approx((b.mean, b.std, b.cpk), rel=1e-9)
    assert fast.requirements[0].std == pytest.approx(np.std(vals, ddof=1), rel=1e-9)  # numpy on the stored values
    assert fast.resonance_std_hz == pytest.approx(slow.resonance_std_hz, rel=1e-6)
    assert [w.file for w in fast.worst] == [w.file for w in slow.worst]
    later = history.history([str(db)], since="2026-11-05T11:00").lots[0]
    assert later.units == 34  # only the runs at 11:00 and 12:00


def test_combine_is_the_pooled_mean_and_variance():
    from matchtool.store import combine, moments

    rng = np.random.default_rng(4)
    x = rng.normal(915e6, 2e6, 1000)
    parts = [moments(x[:10]), moments(x[10:400]), moments(x[400:])]
    n, m, q = combine(combine(parts[0], parts[1]), parts[2])
    assert n == 1000 and m == pytest.approx(x.mean(), rel=1e-14)
    assert q / (n - 1) == pytest.approx(np.var(x, ddof=1), rel=1e-10)  # numpy's two-pass variance


def test_a_damaged_store_is_one_line(tmp_path, spec):
    import sqlite3

    db = tmp_path / "r.db"
    put(db, [unit("a.s1p", rl_req(12))], spec)
    with sqlite3.connect(db) as c:
        c.execute("drop table lot_units")
    with pytest.raises(InputError, match="cannot read the results store") as ei:
        history.history([str(db)])
    assert "\n" not in str(ei.value) and "SELECT" not in str(ei.value)


def test_a_lot_where_every_unit_passed_lists_those_closest_to_failing(tmp_path, spec):
    rng = np.random.default_rng(17)
    units = [unit(f"u{k}.s1p", rl_req(rng.uniform(10.5, 16)), res_req(rng.uniform(907e6, 923e6))) for k in range(25)]
    put(tmp_path / "r.db", units, spec)
    (lt,) = history.history([str(tmp_path / "r.db")]).lots
    expect = batch.worst_units([u.result for u in units])
    assert all(w.passed for w in expect) and len(expect) == 5
    assert [(w.file, w.requirement) for w in lt.worst] == [(w.file, w.requirement) for w in expect]
    assert all(w.passed for w in lt.worst)
    assert [w.relative_margin for w in lt.worst] == pytest.approx([w.relative_margin for w in expect])
