"""Field records → fitted life distributions.

Read a plant's bearing records (:func:`read_records`), fit two- and
three-parameter Weibull and lognormal lives with right and interval
censoring (:func:`fit_records`), rank them by AICc or BIC, recommend the simplest model the records
support (:mod:`fleetsim.fit.choice`), and compare the
field B10 with the catalogue L10 (:func:`compare_with_catalogue`). The
``reliability`` package is used only through :mod:`fleetsim.fit.adapter`.
Knows nothing of simulation; never prints or plots as a side effect
(:func:`probability_plot` draws only on the axes it is given or creates).
"""

from fleetsim.fit.calibration import (
    GroupCalibration,
    calibrate,
    field_factor_snippet,
    fitted_life_entry,
    fitted_life_snippet,
)
from fleetsim.fit.candidates import B_LIVES, MODELS, CandidateFit, Estimate, FittedDistribution
from fleetsim.fit.catalogue import CatalogueComparison, compare_with_catalogue
from fleetsim.fit.choice import LocationTest, ModelChoice, choose_model
from fleetsim.fit.errors import FitError, FitWarning
from fleetsim.fit.field_factor import FieldFactorFit, fit_field_factor, scaled_sample
from fleetsim.fit.fitting import FitResult, fit_records
from fleetsim.fit.location import LocationProfile, profile_location
from fleetsim.fit.plot import plotting_positions, probability_plot
from fleetsim.fit.records import OUTCOMES, FieldRecords, read_records
from fleetsim.fit.sample import CensoredSample
from fleetsim.fit.scenario_lives import CatalogueLife, catalogue_lives

__all__ = [
    "B_LIVES",
    "MODELS",
    "OUTCOMES",
    "CandidateFit",
    "CatalogueLife",
    "FieldFactorFit",
    "GroupCalibration",
    "calibrate",
    "catalogue_lives",
    "field_factor_snippet",
    "fit_field_factor",
    "fitted_life_entry",
    "fitted_life_snippet",
    "scaled_sample",
    "CatalogueComparison",
    "CensoredSample",
    "Estimate",
    "FieldRecords",
    "FitError",
    "FitResult",
    "FitWarning",
    "FittedDistribution",
    "LocationTest",
    "ModelChoice",
    "choose_model",
    "LocationProfile",
    "compare_with_catalogue",
    "fit_records",
    "plotting_positions",
    "probability_plot",
    "profile_location",
    "read_records",
]
