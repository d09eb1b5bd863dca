"""Derived results: kept with the content stamp of the records they came from."""

from __future__ import annotations

from datetime import timedelta

import pytest

from passagelog.errors import InputError
from passagelog.model import Fix, LogEntry
from passagelog.store import derived

from .conftest import T0


def test_stamp_moves_with_every_kind_of_record(book, voyage, route):
    stamps = [derived.content_stamp(book, voyage)]

    def moved():
        stamps.append(derived.content_stamp(book, voyage))
        return stamps[-1] != stamps[-2]

    assert not moved()  # reading changes nothing
    plan_id, _ = book.create_plan(route, "created")
    assert moved()
    book.assign_plan(voyage, plan_id)
    assert moved()
    f = book.add_fix(voyage, Fix(T0, 50.70, -1.30))
    assert moved()
    book.correct_fix(voyage, f.fix_id, Fix(T0, 50.71, -1.30), "typo in the latitude")
    assert moved()
    book.add_entry(voyage, LogEntry(T0 + timedelta(minutes=5), "departure"))
    assert moved()
    book.save_revision(plan_id, route, "same again")
    assert moved()
    assert len(set(stamps)) == len(stamps) - 1  # all distinct but the unchanged read


def test_a_result_is_kept_replaced_and_cleared(book, voyage):
    assert derived.read_result(book, voyage, "k") is None
    stamp = derived.content_stamp(book, voyage)
    derived.write_result(book, voyage, "k", stamp, b"first")
    derived.write_result(book, voyage, "k", stamp, b"second")
    kept = derived.read_result(book, voyage, "k")
    assert (kept.stamp, kept.data) == (stamp, b"second")
    assert derived.read_result(book, voyage, "other") is None
    # derived results are no part of the record chains
    assert book.verify().ok
    assert derived.clear_results(book) == 1
    assert derived.read_result(book, voyage, "k") is None


def test_bad_arguments_are_refused(book, voyage):
    with pytest.raises(InputError, match="non-empty"):
        derived.write_result(book, voyage, " ", "s", b"x")
    with pytest.raises(InputError, match="bytes"):
        derived.write_result(book, voyage, "k", "s", "text")


def test_rebuilding_the_caches_drops_kept_results(book, voyage):
    derived.write_result(book, voyage, "k", derived.content_stamp(book, voyage), b"x")
    book.rebuild_cache()
    assert derived.read_result(book, voyage, "k") is None
    assert book.verify().ok
