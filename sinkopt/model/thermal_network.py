"""The transient RC network of a batch of designs: one node for the sink (base and fins, its
whole heat capacity), and per device a junction-to-case ladder joined to it.

A device with a Foster description (``Device.foster_r``, ``foster_tau``) gets its Cauer ladder
(sinkopt.physics.transient.foster_to_cauer: the Foster network's nodes have no physical meaning
and cannot be joined to anything else); one without gets a single junction node of capacity
τ_jc / R_jc (one time constant, common practice, no source). The last ladder node reaches the
sink through the rest of the path: the case-to-sink stack, the spreading in the base, the air
heating upstream, i.e. whatever makes the network's steady state equal the steady model's
(``r_link``). The stack layers' and the air's heat capacities are left out: they are thin and
light next to the sink (docs/theory.md#transient-thermal-networks).

Node 0 is the sink; node rises are above the inlet air. No I/O here.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sinkopt.model.design import Device
from sinkopt.physics.transient import foster_to_cauer

__all__ = ["Network", "device_network", "running_state"]

#: Smallest resistance of a link [K/W]: keeps G finite when a path's remainder rounds to 0.
MIN_LINK_K_PER_W = 1e-6


@dataclass
class Network:
    """G (m, N, N) without the sink's conductance to ambient, C (m, N), and where each device's
    junction and heat input sit."""

    G: np.ndarray
    C: np.ndarray
    junction_nodes: np.ndarray  #: (s,) node of each device's junction
    to_sink: np.ndarray  #: (m, N) resistance from each node to the sink node [K/W]
    device_of_node: np.ndarray  #: (N,) device index of each node; -1 for the sink

    def with_ambient(self, g_ambient) -> np.ndarray:
        """G with the sink-to-ambient conductance ``g_ambient`` (m,) [W/K] added."""
        g = self.G.copy()
        g[:, 0, 0] += np.asarray(g_ambient, dtype=float)
        return g

    def node_power(self, device_power) -> np.ndarray:
        """Node powers (..., N) from device powers (..., s): heat enters at the junctions."""
        p = np.asarray(device_power, dtype=float)
        out = np.zeros(p.shape[:-1] + (self.C.shape[-1],))
        out[..., self.junction_nodes] = p
        return out


def _ladder(device: Device, tau_jc_s: float) -> tuple[np.ndarray, np.ndarray]:
    """(R_k, C_k) from the junction to the case; Σ R_k = R_jc."""
    if device.foster_r:
        r, c = foster_to_cauer(np.array(device.foster_r), np.array(device.foster_tau))
        # the ladder describes R_jc: scale away the datasheet's rounding of Σ R_i
        scale = device.r_jc / float(np.sum(r)) if device.r_jc > 0 else 1.0
        return r * scale, c / scale
    r_jc = max(device.r_jc, MIN_LINK_K_PER_W)
    return np.array([r_jc]), np.array([tau_jc_s / r_jc])


def device_network(devices, r_link, sink_capacity, tau_jc_s: float = 0.5) -> Network:
    """The network of m designs.

    Parameters
    ----------
    devices : sequence of Device
        s devices.
    r_link : array_like
        (m, s) resistance from each junction to the sink node [K/W] (R_jc included).
    sink_capacity : array_like
        (m,) heat capacity of the sink [J/K].
    tau_jc_s : float
        Junction-to-case time constant of a device without a Foster description [s].
    """
    r_link = np.asarray(r_link, dtype=float)
    cap = np.asarray(sink_capacity, dtype=float)
    m, s = r_link.shape
    ladders = [_ladder(d, tau_jc_s) for d in devices]
    size = 1 + sum(len(r) for r, _ in ladders)
    G = np.zeros((m, size, size))
    C = np.zeros((m, size))
    C[:, 0] = cap
    nodes = np.zeros(s, dtype=int)
    to_sink = np.zeros((m, size))
    owner = np.full(size, -1)
    k = 1
    for j, (r, c) in enumerate(ladders):
        nodes[j] = k
        n = len(r)
        for i in range(n):
            C[:, k + i] = c[i]
            if i + 1 < n:
                _join(G, k + i, k + i + 1, np.full(m, 1.0 / r[i]))
        # the last ladder resistance plus the rest of the path to the sink
        rest = np.maximum(r_link[:, j] - float(np.sum(r[:-1])), MIN_LINK_K_PER_W)
        _join(G, k + n - 1, 0, 1.0 / rest)
        for i in range(n):
            to_sink[:, k + i] = float(np.sum(r[i:-1])) + rest
        owner[k:k + n] = j
        k += n
    return Network(G, C, nodes, to_sink, owner)


def running_state(net: Network, sink_rise, junction_rise) -> np.ndarray:
    """Node rises (m, N) of a steady state with the sink at ``sink_rise`` (m,) and the
    junctions at ``junction_rise`` (m, s): along each ladder the rise falls linearly with the
    resistance left to the sink (one steady heat flow)."""
    sink = np.asarray(sink_rise, dtype=float)
    tj = np.asarray(junction_rise, dtype=float)
    state = np.repeat(sink[:, None], net.C.shape[-1], axis=1)
    dev = net.device_of_node
    ladder = dev >= 0
    total = net.to_sink[:, net.junction_nodes][:, dev[ladder]]
    share = net.to_sink[:, ladder] / total
    state[:, ladder] = sink[:, None] + share * (tj[:, dev[ladder]] - sink[:, None])
    return state


def _join(G: np.ndarray, a: int, b: int, g: np.ndarray) -> None:
    G[:, a, a] += g
    G[:, b, b] += g
    G[:, a, b] -= g
    G[:, b, a] -= g
