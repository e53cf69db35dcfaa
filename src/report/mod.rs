//! Renderers: the only room that knows about terminals, colour, JSON and SARIF.
