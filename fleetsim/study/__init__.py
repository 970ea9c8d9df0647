"""Replications, seeds, summaries with confidence intervals, comparisons and sweeps."""

from fleetsim.study.cluster import DaskCluster, study_cluster
from fleetsim.study.engines import choose_engine, replicate
from fleetsim.study.result import StudyResult, survival_curve
from fleetsim.study.runner import run_replications
from fleetsim.study.seeds import replication_seed
from fleetsim.study.study import compare, paired_table, run_study, with_policy
from fleetsim.study.summary import Estimate, estimate, paired_difference, summarise

__all__ = [
    "DaskCluster",
    "Estimate",
    "StudyResult",
    "choose_engine",
    "compare",
    "estimate",
    "paired_difference",
    "paired_table",
    "replicate",
    "replication_seed",
    "run_replications",
    "run_study",
    "study_cluster",
    "summarise",
    "survival_curve",
    "with_policy",
]
