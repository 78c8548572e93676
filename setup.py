"""Build step only: ship the demo library (the top-level ``product_library/`` folder, where the project keeps
it) inside the wheel as the package data ``procplan/demo_library``. Everything else is in pyproject.toml."""

import shutil
from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py


class BuildWithDemoLibrary(build_py):
    """build_py that also copies product_library/ into the built package."""

    def run(self):
        super().run()
        source = Path(__file__).resolve().parent / "product_library"
        target = Path(self.build_lib) / "procplan" / "demo_library"
        if target.exists():
            shutil.rmtree(target)
        shutil.copytree(source, target, ignore=shutil.ignore_patterns("__pycache__", "*.pyc", ".*", "*.tmp"))


setup(cmdclass={"build_py": BuildWithDemoLibrary})
