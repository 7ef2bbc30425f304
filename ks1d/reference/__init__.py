"""Curated reference data (NIST LDA/LSD and HF-limit atomic energies, experimental
ionisation energies, electron affinities, s-d promotion energies and diatomic
constants), each value with its unit, source and a from-memory flag.

See :mod:`ks1d.reference.data` for the file format and the loader.
"""
from .data import (
    QUANTITIES,
    STATEMENTS,
    NoReferenceValue,
    Quantity,
    ReferenceDataError,
    ReferenceStatement,
    ReferenceValue,
    UnknownReference,
    convert,
    has_stable_anion,
    reference_statement,
    reference_statements,
    reference_table,
    reference_value,
)

__all__ = [
    "QUANTITIES", "STATEMENTS", "NoReferenceValue", "Quantity", "ReferenceDataError",
    "ReferenceStatement", "ReferenceValue", "UnknownReference", "convert", "has_stable_anion",
    "reference_statement", "reference_statements", "reference_table", "reference_value",
]
