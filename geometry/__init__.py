"""Copper geometry: case files, units, stackup, shapes, artwork readers and meshing.

This package never imports :mod:`solver`.
"""
