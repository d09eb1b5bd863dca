"""Fix records a page at a time: keyset reads give the same records, in the same order, as
reading the whole history and sorting it by time (ties by id)."""

from __future__ import annotations

from datetime import timedelta

import pytest

from passagelog.errors import InputError, NotFoundError
from passagelog.model import Craft, Fix, Voyage
from tests.store.conftest import T0


@pytest.fixture
def records(book, voyage):
    """25 fixes a minute apart, three of them at one time (ties), one logged late out of
    time order and one corrected; a second voyage's fixes interleaved in time."""
    times = [T0 + timedelta(minutes=i) for i in range(20)] + [T0 + timedelta(minutes=7)] * 3
    times += [T0 + timedelta(minutes=30), T0 + timedelta(minutes=3, seconds=30)]
    for i, t in enumerate(times):
        book.add_fix(voyage.voyage_id, Fix(t, 50.0 + i * 1e-4, -1.0))
    book.correct_fix(voyage.voyage_id, 5, Fix(T0 + timedelta(minutes=4), 50.0005, -1.001),
                     "misread")
    craft = book.add_craft(Craft("Other"))
    other = book.add_voyage(Voyage("Other run", craft_id=craft.craft_id))
    for i in range(5):
        book.add_fix(other.voyage_id, Fix(T0 + timedelta(minutes=i), 10.0, 10.0))
    every = sorted(book.fixes(voyage.voyage_id, history=True),
                   key=lambda f: (f.time_utc, f.fix_id))
    return voyage.voyage_id, [f.fix_id for f in every]


def ids(fixes):
    return [f.fix_id for f in fixes]


def test_paging_forward_and_back_walks_every_record_once(book, records):
    vid, expected = records
    assert book.fix_record_count(vid) == len(expected) == 26
    got, last = [], None
    while True:
        page = book.fix_records_after(vid, last, limit=4)
        if not page:
            break
        got += ids(page)
        last = page[-1].fix_id
    assert got == expected
    got, first = [], None
    while True:
        page = book.fix_records_before(vid, first, limit=5)
        if not page:
            break
        got = ids(page) + got
        first = page[0].fix_id
    assert got == expected


def test_rank_time_jump_and_corrections(book, records):
    vid, expected = records
    for place, fid in enumerate(expected):
        assert book.fix_record_rank(vid, fid) == place
    # at or after 07:00 after T0: the first of the three records at that time
    page = book.fix_records_from(vid, T0 + timedelta(minutes=7), limit=3)
    assert all(f.time_utc == T0 + timedelta(minutes=7) for f in page)
    assert ids(page) == expected[expected.index(page[0].fix_id):][:3]
    assert book.fix_records_from(vid, T0 + timedelta(hours=5), limit=3) == []
    assert book.corrections_of(expected) == {5: 26}


def test_bad_page_requests_are_refused(book, records):
    vid, _ = records
    with pytest.raises(InputError, match="page size"):
        book.fix_records_after(vid, limit=0)
    with pytest.raises(NotFoundError, match="fix 29"):
        book.fix_records_before(vid, 29, limit=3)  # a fix of the other voyage
    with pytest.raises(InputError, match="fix id"):
        book.fix_record_rank(vid, "3")
