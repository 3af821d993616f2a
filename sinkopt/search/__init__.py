"""The search: Optuna study and storages, the vectorised sweep-and-refine scheme, Pareto filtering
and many workers on one study."""
