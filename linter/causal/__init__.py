"""Pure causal-graph algorithms: d-separation, witness paths, adjustment sets,
identification of effects and instruments.

No I/O and no findings: callers pass a ``networkx.DiGraph`` built by the
model (hidden ``<->`` parents included) and sets of variable names.
"""

from .adjustment import (
    adjustment_exists,
    canonical_adjustment,
    collider_bias_path,
    collider_bias_paths,
    confounding_path,
    fixable_confounding_path,
    forbidden,
    instrument_conditions,
    instrument_like,
    is_valid_adjustment,
    mediators,
    open_noncausal_path,
    proper_backdoor_graph,
    proper_backdoor_skip,
    proper_causal_nodes,
)
from .bounded import OpenPathWitnesses, open_path_witnesses
from .dsep import d_connecting_path, d_separated, path_is_causal, path_is_open
from .graph import ancestors, descendants, hidden_node_name, is_hidden
from .identify import Hedge, Identification, identify_effect, latent_projection
from .instruments import Instrument, instruments
from .paths import (
    BlockingNode,
    OpenedCollider,
    PathInfo,
    describe_path,
    describe_paths,
    enumerate_paths,
)
from .separators import (
    front_door_set,
    implied_independencies,
    minimal_adjustment_sets,
    minimal_separator,
    smallest_adjustment_set,
)

__all__ = [
    "BlockingNode",
    "Hedge",
    "Identification",
    "Instrument",
    "OpenedCollider",
    "PathInfo",
    "adjustment_exists",
    "ancestors",
    "canonical_adjustment",
    "collider_bias_path",
    "collider_bias_paths",
    "confounding_path",
    "d_connecting_path",
    "d_separated",
    "descendants",
    "describe_path",
    "describe_paths",
    "enumerate_paths",
    "fixable_confounding_path",
    "forbidden",
    "front_door_set",
    "hidden_node_name",
    "identify_effect",
    "implied_independencies",
    "instrument_conditions",
    "instrument_like",
    "instruments",
    "is_hidden",
    "is_valid_adjustment",
    "latent_projection",
    "mediators",
    "open_path_witnesses",
    "OpenPathWitnesses",
    "minimal_adjustment_sets",
    "minimal_separator",
    "open_noncausal_path",
    "path_is_causal",
    "path_is_open",
    "proper_backdoor_graph",
    "proper_backdoor_skip",
    "proper_causal_nodes",
    "smallest_adjustment_set",
]
