"""Tolerance studies: degrees of freedom, samplers, the Monte Carlo study and its run file."""

from benchcheck.tolerance.dofs import Dof, resolve_dofs
from benchcheck.tolerance.runfile import RunFileError, TrialRecord, read_run_file
from benchcheck.tolerance.samplers import SAMPLERS, Sampler
from benchcheck.tolerance.study import StopRequested, StudyInterrupted, StudyResult, run_study
from benchcheck.tolerance.workers import PluginOptions

__all__ = [
    "Dof",
    "resolve_dofs",
    "RunFileError",
    "TrialRecord",
    "read_run_file",
    "SAMPLERS",
    "Sampler",
    "StopRequested",
    "StudyInterrupted",
    "StudyResult",
    "run_study",
    "PluginOptions",
]
