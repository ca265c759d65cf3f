"""Candidate birth associations: the table reader and Monte Carlo draws."""

from .draws import AssociationDraws, draw_associations
from .table import COLUMNS, REQUIRED, Association, AssociationTable, associations_from_table, read_associations

__all__ = ["AssociationDraws", "draw_associations", "COLUMNS", "REQUIRED", "Association", "AssociationTable",
           "associations_from_table", "read_associations"]
