"""Planning models in closed form: the quick answers, and the twins the engine is tested against.

All durations are in hours. Life distributions are
:class:`fleetsim.life.LifeDistribution` or anything with ``sf``, ``cdf``,
``pdf`` and ``mean_h`` (a frozen scipy distribution is wrapped by
:class:`ScipyLife`). Knows nothing of SimPy; does no printing or plotting.

- :mod:`~fleetsim.plan.renewal` — renewal function M(t), Var N(t), asymptote.
- :mod:`~fleetsim.plan.age` — age replacement cost rate and optimum.
- :mod:`~fleetsim.plan.block` — block replacement cost rate and optimum.
- :mod:`~fleetsim.plan.delay_time` — inspection interval (delay-time model).
- :mod:`~fleetsim.plan.spares` — base stock (Palm) and (s, S) reorder levels.
- :mod:`~fleetsim.plan.kofn` — k-out-of-n groups, machine-repair queue.
"""

from fleetsim.plan.age import (
    ReplacementRates,
    age_replacement_cost_rate,
    age_replacement_rates,
    optimal_age_replacement,
)
from fleetsim.plan.block import (
    BlockRates,
    block_replacement_cost_rate,
    block_replacement_rates,
    optimal_block_replacement,
)
from fleetsim.plan.costs import ReplacementCosts, ReplacementOptimum, run_to_failure_cost_rate
from fleetsim.plan.delay_time import (
    DelayTimeModel,
    InspectionOptimum,
    failure_share,
    inspection_cost_rate,
    inspection_downtime_fraction,
    optimal_inspection_interval,
)
from fleetsim.plan.kofn import (
    MachineRepairResult,
    k_out_of_n_reliability,
    k_out_of_n_reliability_mixed,
    machine_repair_queue,
    units_up_distribution,
)
from fleetsim.plan.lifelike import LifeLike, ScipyLife, as_life, integrated_reliability
from fleetsim.plan.renewal import (
    RenewalMoments,
    renewal_asymptote,
    renewal_count_variance,
    renewal_function,
    renewal_moments,
)
from fleetsim.plan.spares import (
    BaseStockResult,
    ReorderLevels,
    base_stock_for_fill_rate,
    base_stock_performance,
    economic_order_quantity,
    reorder_levels_for_fill_rate,
    reorder_levels_performance,
    spares_demand_per_h,
)

__all__ = [
    "BaseStockResult",
    "BlockRates",
    "DelayTimeModel",
    "InspectionOptimum",
    "LifeLike",
    "MachineRepairResult",
    "RenewalMoments",
    "ReorderLevels",
    "ReplacementCosts",
    "ReplacementOptimum",
    "ReplacementRates",
    "ScipyLife",
    "age_replacement_cost_rate",
    "age_replacement_rates",
    "as_life",
    "base_stock_for_fill_rate",
    "base_stock_performance",
    "block_replacement_cost_rate",
    "block_replacement_rates",
    "economic_order_quantity",
    "failure_share",
    "inspection_cost_rate",
    "inspection_downtime_fraction",
    "integrated_reliability",
    "k_out_of_n_reliability",
    "k_out_of_n_reliability_mixed",
    "machine_repair_queue",
    "optimal_age_replacement",
    "optimal_block_replacement",
    "optimal_inspection_interval",
    "renewal_asymptote",
    "renewal_count_variance",
    "renewal_function",
    "renewal_moments",
    "reorder_levels_for_fill_rate",
    "reorder_levels_performance",
    "run_to_failure_cost_rate",
    "spares_demand_per_h",
    "units_up_distribution",
]
