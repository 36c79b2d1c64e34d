//! Figures and the HTML report, through the library: every chart kind and every run panel
//! renders, the SVG is well-formed XML, holds the expected series and legend entries, and
//! its axes hold the data.

mod plots;
mod svg;
