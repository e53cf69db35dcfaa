//! A resistor's, pot's or capacitor's value as the deck gives it: the one place a value is read
//! from the raw element, for the stand-ins, the timer analysis and the rules alike, so a part's
//! ohms or farads cannot differ between a computation and a finding. Each value comes with
//! where it came from (`*_rated`).

use crate::circuit::{Device, Rated};
use crate::netlist::FlatNetlist;

/// A resistor's or pot's resistance: its part data, else the element's value, else its `r`
/// parameter.
pub fn resistance(netlist: &FlatNetlist, device: &Device) -> Option<f64> {
    resistance_rated(netlist, device).map(|r| r.value)
}

/// [`resistance`] with its provenance.
pub fn resistance_rated(netlist: &FlatNetlist, device: &Device) -> Option<Rated> {
    if let Some(r) = device.data.get("resistance") {
        return Some(r.clone());
    }
    let e = netlist.elements.get(device.element)?;
    let (value, from) = match e.value.and_then(|v| v.known()) {
        Some(v) => (v, "value"),
        None => (e.param("r").and_then(|v| v.known())?, "r parameter"),
    };
    Some(Rated {
        value,
        source: format!("the {from} of {} in the netlist", e.path),
    })
}

/// A capacitor's capacitance: its part data, else the element's value, else its `c`
/// parameter; only a finite value above zero.
pub fn capacitance(netlist: &FlatNetlist, device: &Device) -> Option<f64> {
    capacitance_rated(netlist, device).map(|c| c.value)
}

/// [`capacitance`] with its provenance.
pub fn capacitance_rated(netlist: &FlatNetlist, device: &Device) -> Option<Rated> {
    let usable = |c: &f64| c.is_finite() && *c > 0.0;
    if let Some(c) = device.data.get("capacitance") {
        return usable(&c.value).then(|| c.clone());
    }
    let e = netlist.elements.get(device.element)?;
    let (value, from) = match e.value.and_then(|v| v.known()) {
        Some(v) => (v, "value"),
        None => (e.param("c").and_then(|v| v.known())?, "c parameter"),
    };
    usable(&value).then(|| Rated {
        value,
        source: format!("the {from} of {} in the netlist", e.path),
    })
}
