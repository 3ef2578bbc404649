"""The <job:number> converter: only a job number (year, dash, 4 to 7 ASCII digits) reaches a view."""

from __future__ import annotations

import pytest
from django.urls import NoReverseMatch, Resolver404, get_resolver, resolve, reverse

from shopdesk.workshop.selectors import work_order_from_scan
from tests.accounts.test_access import _walk

MALFORMED = [
    "OIL-5WT",
    "2026-001",  # 3 digits
    "2026-00000001",  # 8 digits: longer than the column holds
    "٢٠٢٦-٠٠٤٢",  # Arabic-Indic digits: \d took them
    "２０２６-００４２",  # full-width digits
    "2026-+042",
    "2026- 042",
    "2026-0042 ",
    "26-0042",
]


def _job_url_names() -> list[str]:
    return sorted(
        name for pattern, name in _walk(get_resolver().url_patterns) if name and "<job:number>" in pattern
    )


def test_every_url_with_a_job_number_takes_it_through_the_converter() -> None:
    names = _job_url_names()
    # The payment addresses took <str:number> before; the documents' too.
    assert {"workshop:work-order", "workshop:payment", "workshop:payment-void", "documents:job-card"} <= set(
        names
    )
    patterns = [pattern for pattern, name in _walk(get_resolver().url_patterns) if name]
    assert not [pattern for pattern in patterns if "<str:number>" in pattern]


@pytest.mark.parametrize("number", MALFORMED)
def test_a_malformed_number_is_not_resolved_nor_reversed(number) -> None:
    with pytest.raises(Resolver404):
        resolve(f"/jobs/{number}/")
    with pytest.raises(Resolver404):
        resolve(f"/jobs/{number}/payments/")
    with pytest.raises(NoReverseMatch):
        reverse("workshop:work-order", args=[number])


@pytest.mark.parametrize("number", ["2026-0042", "2026-12345", "2026-1234567"])
def test_four_to_seven_digits_resolve(number) -> None:
    match = resolve(f"/jobs/{number}/payments/7/void/")
    assert (match.view_name, match.kwargs) == ("workshop:payment-void", {"number": number, "payment_id": 7})


@pytest.mark.django_db
def test_a_malformed_number_posted_to_a_payment_is_a_404(client, front_desk, work_order) -> None:
    client.force_login(front_desk)
    good = reverse("workshop:payment", args=[work_order.number])
    assert client.post(good, {}).status_code == 200  # the form again, its errors at the fields
    bad = good.replace(work_order.number, "٢٠٢٦-٠٠٠١")
    assert client.post(bad, {"payment-amount": "1", "payment-method": "cash"}).status_code == 404
    assert not work_order.payments.exists()


ARABIC_INDIC = str.maketrans("0123456789", "٠١٢٣٤٥٦٧٨٩")


@pytest.mark.django_db
@pytest.mark.parametrize("how", ["number", "path", "address"])
def test_a_scan_of_the_number_in_other_digits_is_not_a_scan(
    work_order, how, django_assert_num_queries
) -> None:
    # The job's own number in Arabic-Indic digits: the old \d{4}-\d{4,6} pattern and the <str:…>
    # converter took it, and a query looked for it. Now it is no job number: no query at all.
    number = work_order.number.translate(ARABIC_INDIC)
    typed = {"number": number, "path": f"/jobs/{number}/", "address": f"http://testserver/jobs/{number}/"}[
        how
    ]
    with django_assert_num_queries(0):
        assert work_order_from_scan(typed) is None
    assert work_order_from_scan(typed.translate(str.maketrans("٠١٢٣٤٥٦٧٨٩", "0123456789"))) == work_order


@pytest.mark.django_db
def test_the_board_and_queue_still_link_every_job(client, technician, work_order) -> None:
    # Their addresses are reversed once per page with a marker number (selectors._job_addresses).
    client.force_login(technician)
    page = client.get(reverse("workshop:board")).content.decode()
    assert f'href="/jobs/{work_order.number}/"' in page
    assert f'action="/jobs/{work_order.number}/move/"' in page
