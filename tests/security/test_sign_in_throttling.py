"""Sign-in throttling (django-axes): by user name and address together, 15 minutes, reset on success."""

from __future__ import annotations

from datetime import timedelta

import pytest
from axes.models import AccessAttempt
from django.conf import settings
from django.test import override_settings
from django.urls import reverse

from tests.conftest import PASSWORD

pytestmark = pytest.mark.django_db

OFFICE = "192.0.2.10"  # documentation addresses (RFC 5737)
WORKSHOP = "192.0.2.20"


def _sign_in(client, username: str, password: str, address: str = OFFICE, **extra: str):
    return client.post(
        reverse("accounts:sign-in"),
        {"username": username, "password": password},
        REMOTE_ADDR=address,
        **extra,
    )


def _signed_in_as(client, user) -> bool:
    return client.session.get("_auth_user_id") == str(user.pk)


def _fail(client, username: str, times: int, address: str = OFFICE, **extra: str):
    response = None
    for _ in range(times):
        response = _sign_in(client, username, "not-the-password", address, **extra)
    return response


def test_the_settings_lock_a_user_name_from_one_address_for_fifteen_minutes() -> None:
    assert settings.AXES_FAILURE_LIMIT == 5
    assert settings.AXES_LOCKOUT_PARAMETERS == [["username", "ip_address"]]
    assert timedelta(hours=settings.AXES_COOLOFF_TIME) == timedelta(minutes=15)
    assert settings.AXES_RESET_ON_SUCCESS is True


def test_four_wrong_passwords_still_leave_the_right_one_working(client, front_desk) -> None:
    response = _fail(client, "desk", 4)
    assert response.status_code == 200
    assert "Please enter a correct username and password" in response.content.decode()
    assert _sign_in(client, "desk", PASSWORD).status_code == 302
    assert _signed_in_as(client, front_desk)


def test_the_fifth_failure_locks_that_user_from_that_address_with_a_clear_message(client, front_desk) -> None:
    response = _fail(client, "desk", 5)
    assert response.status_code == 429
    page = response.content.decode()
    assert "Sign-in paused" in page and "Wait 15 minutes" in page
    # The right password is refused too while the lock holds.
    response = _sign_in(client, "desk", PASSWORD)
    assert response.status_code == 429
    assert not _signed_in_as(client, front_desk)


def test_the_lock_holds_neither_another_address_nor_another_user(client, front_desk, technician) -> None:
    _fail(client, "desk", 5)
    assert _sign_in(client, "bench", PASSWORD).status_code == 302  # same address, other user
    assert _signed_in_as(client, technician)
    client.logout()
    assert _sign_in(client, "desk", PASSWORD, WORKSHOP).status_code == 302  # same user, other address
    assert _signed_in_as(client, front_desk)


def test_the_lock_ends_after_the_cool_off(client, front_desk) -> None:
    _fail(client, "desk", 5)
    # Time travel: move the recorded failures back in time rather than wait.
    attempts = AccessAttempt.objects.filter(username="desk", ip_address=OFFICE)
    assert attempts.count() == 1 and attempts.get().failures_since_start == 5
    backdated = attempts.get().attempt_time - timedelta(minutes=14)
    attempts.update(attempt_time=backdated)
    assert _sign_in(client, "desk", PASSWORD).status_code == 429, "locked for 15 minutes, not 14"
    # A try during the lock counts as a failure and starts the cool-off again.
    assert attempts.get().attempt_time > backdated + timedelta(minutes=13)
    attempts.update(attempt_time=attempts.get().attempt_time - timedelta(minutes=16))
    assert _sign_in(client, "desk", PASSWORD).status_code == 302
    assert _signed_in_as(client, front_desk)


def test_a_success_resets_the_count(client, front_desk) -> None:
    _fail(client, "desk", 4)
    assert _sign_in(client, "desk", PASSWORD).status_code == 302
    client.logout()
    assert not AccessAttempt.objects.filter(username="desk").exists()
    response = _fail(client, "desk", 4)  # four more are not a lock: the count started again
    assert response.status_code == 200
    assert _sign_in(client, "desk", PASSWORD).status_code == 302


@override_settings(
    AXES_IPWARE_META_PRECEDENCE_ORDER=["HTTP_X_FORWARDED_FOR", "REMOTE_ADDR"], AXES_IPWARE_PROXY_COUNT=0
)
def test_behind_a_proxy_each_client_address_counts_apart(client, front_desk) -> None:
    # Every request comes from the proxy's address; the proxy names the client in X-Forwarded-For.
    proxy = "10.0.0.2"
    _fail(client, "desk", 5, proxy, HTTP_X_FORWARDED_FOR=OFFICE)
    assert _sign_in(client, "desk", PASSWORD, proxy, HTTP_X_FORWARDED_FOR=OFFICE).status_code == 429
    response = _sign_in(client, "desk", PASSWORD, proxy, HTTP_X_FORWARDED_FOR=WORKSHOP)
    assert response.status_code == 302
    assert AccessAttempt.objects.get(username="desk").ip_address == OFFICE
