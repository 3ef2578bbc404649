from __future__ import annotations

from django.urls import reverse

from shopdesk.customers.models import Customer


def test_it_finds_customers_by_part_of_a_phone_number(client, front_desk, customer) -> None:
    Customer.objects.create(name="Someone Else", phone="01632 960 999")
    client.force_login(front_desk)
    response = client.get(reverse("customers:search"), {"q": "960 41"}, headers={"HX-Request": "true"})
    body = response.content.decode()
    assert "Ada Marsh" in body
    assert "Someone Else" not in body
    assert "<html" not in body  # htmx gets the results partial only


def test_it_finds_by_name_email_and_serial(client, front_desk, unit) -> None:
    client.force_login(front_desk)
    for query in ("marsh", "ADA@EXAMPLE", "rf34-00"):
        body = client.get(reverse("customers:search"), {"q": query}).content.decode()
        assert "Ada Marsh" in body, query
    assert "RF34-0001" in client.get(reverse("customers:search"), {"q": "rf34"}).content.decode()


def test_it_says_when_nothing_matches(client, front_desk, customer) -> None:
    client.force_login(front_desk)
    body = client.get(reverse("customers:search"), {"q": "zzzz"}).content.decode()
    assert "Nothing matches" in body


def test_it_searches_in_two_queries_however_many_customers(
    client, front_desk, django_assert_max_num_queries
) -> None:
    Customer.objects.bulk_create(
        Customer(name=f"Rider {n}", phone=f"01632 96{n:04d}", phone_digits=f"0163296{n:04d}")
        for n in range(60)
    )
    client.force_login(front_desk)
    # session, user, user permissions, group permissions, customers, units,
    # and the session's idle-timeout refresh, the first request after sign-in (savepoint, update,
    # release) = 9
    with django_assert_max_num_queries(9):
        response = client.get(reverse("customers:search"), {"q": "rider"}, headers={"HX-Request": "true"})
    assert response.content.decode().count('class="hit"') == 15


def test_a_character_no_record_can_hold_is_refused_under_the_box(client, front_desk, customer) -> None:
    # Found by hypothesis on PostgreSQL: a NUL typed into the search reached the database, which
    # refuses it in any text (a 500). The form refuses it first.
    client.force_login(front_desk)
    for headers in ({}, {"HX-Request": "true"}):
        response = client.get(reverse("customers:search"), {"q": "Mar\x00sh"}, headers=headers)
        assert response.status_code == 200
        body = response.content.decode()
        assert "The search holds a control character (NUL): type it again." in body
        assert "Ada Marsh" not in body


def test_a_search_too_long_says_so_instead_of_being_cut_short(client, front_desk, customer) -> None:
    client.force_login(front_desk)
    body = client.get(reverse("customers:search"), {"q": "Marsh " * 20}).content.decode()
    assert "Search with at most 100 characters (this has 119)." in body
    assert 'aria-invalid="true"' in body  # the box itself is marked, not only the message below it
