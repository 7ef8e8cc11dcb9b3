"""Equation assembly: variables, named residuals, degrees of freedom and structural analysis."""

from balance.equations.model import Equation, Model, Variable, compile_flowsheet

__all__ = ["Equation", "Model", "Variable", "compile_flowsheet"]
