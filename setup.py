"""Builds placer's compiled search kernel; everything else is in pyproject.toml."""

from setuptools import Extension, setup

setup(ext_modules=[Extension("placer.engine._kernel", ["placer/engine/_kernel.c"],
                             extra_compile_args=["-O3", "-std=c99"])])
