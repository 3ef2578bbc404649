"""ShopDesk's calculation library: pure Python over pint quantities, no Django.

Importable from a plain Python shell: ``from shopdesk.calc import oil``.
"""

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, parse_quantity, ureg

__all__ = ["Q_", "CalcInputError", "parse_quantity", "ureg"]
