from django.apps import AppConfig


class ShopConfig(AppConfig):
    name = "shopdesk.shop"
    verbose_name = "Shop"
