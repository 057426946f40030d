"""Energies of every state under every recipe: electronic energy from the recipe's source plus the dossier's own RRHO/quasi-RRHO correction (dossier.science.thermo)."""
from __future__ import annotations

from typing import Any


from dossier.records import Calculation
from dossier.analysis.common import _Unavailable, _kj


class _Energies:
    """Electronic, ZPE, enthalpy and Gibbs energies of every state under every recipe (cached)."""

    def __init__(self, project):
        self.p = project
        self._thermo: dict[tuple[str, float], Any] = {}
        self._thermo_errors: dict[str, str] = {}

    def electronic(self, state: str, recipe: str) -> tuple[float, Calculation, str]:
        st = self.p.states[state]
        rc = self.p.recipes[recipe]
        if rc.electronic == "geometry":
            rec, part = st.geometry, "geometry"
        else:
            rec = st.single_points.get(rc.electronic)
            part = f"single point {rc.electronic}"
            if rec is None:
                raise _Unavailable(f"state '{state}' has no single point '{rc.electronic}' (recipe '{recipe}')")
        if rec.energy_hartree is None:
            raise _Unavailable(f"state '{state}': the {part} job holds no final energy")
        return float(rec.energy_hartree), rec, part

    def thermo(self, state: str, temperature_k: float):
        key = (state, float(temperature_k))
        if key in self._thermo:
            return self._thermo[key]
        from dossier.science import thermo as th

        st = self.p.states[state]
        freq = st.frequencies
        result = None
        if freq is not None and freq.vibrations is not None and freq.elements:
            s = self.p.settings
            try:
                result = th.rrho(freq.elements, freq.coordinates_angstrom, freq.vibrations.wavenumbers_cm1,
                                 freq.multiplicity or st.geometry.multiplicity or 1, float(temperature_k),
                                 standard_state=s.standard_state, qrrho=s.qrrho, symmetry_number=st.symmetry_number,
                                 frequency_scale=s.frequency_scale)
            except Exception as exc:  # a ThermoError (DossierError) or bad numbers: reported per state
                self._thermo_errors[state] = str(exc)
                result = None
        self._thermo[key] = result
        return result

    def thermo_error(self, state: str) -> str | None:
        return self._thermo_errors.get(state)

    def total(self, state: str, recipe: str, temperature_k: float, kind: str) -> float:
        """Energy in hartree: kind 'electronic' | 'zpe' | 'enthalpy' | 'gibbs'."""
        e, _, _ = self.electronic(state, recipe)
        if kind == "electronic":
            return e
        if self.p.recipes[recipe].thermal != "frequencies":
            raise _Unavailable(f"recipe '{recipe}' adds no thermal correction")
        t = self.thermo(state, temperature_k)
        if t is None:
            reason = self.thermo_error(state) or "no frequency job"
            raise _Unavailable(f"state '{state}': no thermal correction ({reason})")
        corr = {"zpe": t.zpe_hartree, "enthalpy": t.enthalpy_correction_hartree,
                "gibbs": t.gibbs_correction_hartree}[kind]
        return e + corr

    def relative_kj_mol(self, a: str, b: str, recipe: str, temperature_k: float, kind: str) -> float:
        return _kj(self.total(b, recipe, temperature_k, kind) - self.total(a, recipe, temperature_k, kind))

    def files(self, states: list[str], recipe: str) -> list[str]:
        out: list[str] = []
        for s in states:
            try:
                _, rec, _ = self.electronic(s, recipe)
                out.append(self.p.label(rec))
            except _Unavailable:
                pass
            st = self.p.states[s]
            if self.p.recipes[recipe].thermal == "frequencies" and st.frequencies is not None:
                out.append(self.p.label(st.frequencies))
        return list(dict.fromkeys(out))

    def level_label(self, state: str, recipe: str) -> str | None:
        try:
            _, rec, part = self.electronic(state, recipe)
        except _Unavailable:
            return None
        st = self.p.states[state]
        label = rec.level.label()
        if part != "geometry":
            label = f"{label}//{st.geometry.level.label()}"
        if self.p.recipes[recipe].thermal == "frequencies" and st.frequencies is not None:
            s = self.p.settings
            label += f" + RRHO ({s.qrrho} low modes, {s.standard_state}) from {st.frequencies.level.label()}"
        return label

