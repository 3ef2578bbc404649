import pytest
from django.contrib.auth.models import Group, Permission

from shopdesk.accounts import roles


def test_it_gives_each_group_exactly_its_permissions(db) -> None:
    for role, names in roles.ROLE_PERMISSIONS.items():
        group = Group.objects.get(name=role)
        held = {
            f"{p.content_type.app_label}.{p.codename}"
            for p in group.permissions.select_related("content_type")
        }
        if names == ["*"]:
            expected = {
                f"{p.content_type.app_label}.{p.codename}"
                for p in Permission.objects.filter(content_type__app_label__in=roles.OWNER_APPS)
            }
        else:
            expected = set(names)
        assert held == expected, role


def test_it_keeps_bench_records_and_stock_away_from_the_front_desk(db) -> None:
    desk = set(roles.ROLE_PERMISSIONS[roles.FRONT_DESK])
    assert "workshop.move_on_bench_workorder" not in desk
    assert not any(name.startswith("specs.change_") for name in desk)
    technician = set(roles.ROLE_PERMISSIONS[roles.TECHNICIAN])
    # A technician keeps stacks in the model's stack library, and changes no spec sheet.
    assert {name for name in technician if name.startswith("specs.add_")} == {"specs.add_stackpreset"}
    assert not any(name.startswith("specs.change_") for name in technician)
    assert not any("delete" in name for name in technician)


def test_it_signs_in_and_out(client, front_desk) -> None:
    from tests.conftest import PASSWORD

    response = client.post("/accounts/sign-in/", {"username": "desk", "password": PASSWORD})
    assert response.status_code == 302
    assert client.get("/").status_code == 200
    client.post("/accounts/sign-out/")
    assert client.get("/").status_code == 302


def test_it_refuses_a_wrong_password_with_a_message(client, front_desk) -> None:
    response = client.post("/accounts/sign-in/", {"username": "desk", "password": "not-the-password"})
    assert response.status_code == 200
    assert "correct username and password" in response.content.decode()


@pytest.mark.django_db(transaction=True)
def test_migrating_another_database_gives_the_roles_to_that_one(tmp_path) -> None:
    """restore_shop --database-url migrates a scratch database; its roles must not land in the shop's."""
    from django.core.management import call_command
    from django.db import connections
    from django.db.utils import load_backend

    alias = "roles_elsewhere"
    elsewhere = connections.configure_settings(
        {
            "default": connections.settings["default"],
            alias: {"ENGINE": "django.db.backends.sqlite3", "NAME": str(tmp_path / "elsewhere.sqlite3")},
        }
    )[alias]
    # Made here, as restore_shop makes its target's, rather than declared in the settings.
    connections[alias] = load_backend(elsewhere["ENGINE"]).DatabaseWrapper(elsewhere, alias)
    Group.objects.all().delete()
    try:
        call_command("migrate", database=alias, interactive=False, verbosity=0)
        owner = Group.objects.using(alias).get(name=roles.OWNER)
        expected = Permission.objects.using(alias).filter(content_type__app_label__in=roles.OWNER_APPS)
        assert owner.permissions.count() == expected.count() > 0
        assert Group.objects.using(alias).filter(name=roles.FRONT_DESK).exists()
        assert not Group.objects.exists()  # nothing written to the shop's own database
    finally:
        connections[alias].close()
        del connections[alias]
