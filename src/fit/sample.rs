//! The layer being fitted: which one, what stays fixed (g, n, thickness, the other
//! layers), and the trial media with its absorption and scattering coefficients replaced.

use crate::medium::{Geometry, Layer, Medium, Source};

use super::error::FitError;

/// The model and the layer whose μa and μs a fit finds.
#[derive(Debug, Clone)]
pub struct Sample {
    medium: Medium,
    layer: usize,
}

impl Sample {
    /// Layer `layer` of `medium`.
    ///
    /// # Errors
    /// [`FitError::Model`] unless `medium` is a slab lit by a collimated beam from above
    /// (what reflectance and transmittance measurements describe), and
    /// [`FitError::NoSuchLayer`] for an index past the last layer.
    pub fn new(medium: &Medium, layer: usize) -> Result<Self, FitError> {
        if medium.geometry() != Geometry::Slab {
            return Err(FitError::Model(
                "a fit needs a slab (\"geometry\": \"slab\"); this model is a sphere".into(),
            ));
        }
        if !matches!(medium.source(), Source::Beam { .. }) {
            return Err(FitError::Model(
                "a fit needs a slab lit by a collimated beam (\"source\": {\"kind\": \"beam\"}), \
                 as in a reflectance and transmittance measurement"
                    .into(),
            ));
        }
        let layers = medium.layers().len();
        if layer >= layers {
            return Err(FitError::NoSuchLayer { layer, layers });
        }
        Ok(Self {
            medium: medium.clone(),
            layer,
        })
    }

    /// The model as given.
    pub fn medium(&self) -> &Medium {
        &self.medium
    }

    /// Index of the fitted layer.
    pub fn layer(&self) -> usize {
        self.layer
    }

    /// The fitted layer as the model gives it.
    pub fn layer_as_given(&self) -> &Layer {
        &self.medium.layers()[self.layer]
    }

    /// Anisotropy g of the fitted layer (the mean cosine of its phase function).
    pub fn anisotropy(&self) -> f64 {
        self.layer_as_given().phase().mean_cosine()
    }

    /// Thickness of the fitted layer, cm.
    pub fn thickness_cm(&self) -> f64 {
        let (top, bottom) = self.medium.layer_bounds_cm(self.layer);
        bottom - top
    }

    /// Scattering coefficient μs = μs′ / (1 − g) for a reduced scattering coefficient, 1/cm.
    pub fn scattering_per_cm(&self, reduced_scattering_per_cm: f64) -> f64 {
        reduced_scattering_per_cm / (1.0 - self.anisotropy())
    }

    /// The model with the fitted layer's absorption and reduced scattering coefficients
    /// (1/cm) replaced; its phase function, index and thickness, the other layers, the
    /// ambient indices and the source are kept.
    ///
    /// # Errors
    /// [`FitError::Medium`] for coefficients the medium refuses (not finite).
    pub fn with_coefficients(
        &self,
        absorption_per_cm: f64,
        reduced_scattering_per_cm: f64,
    ) -> Result<Medium, FitError> {
        let scattering = self.scattering_per_cm(reduced_scattering_per_cm);
        let extinction = absorption_per_cm + scattering;
        let albedo = if extinction > 0.0 {
            scattering / extinction
        } else {
            1.0
        };
        let given = self.layer_as_given();
        let replaced = Layer::new(
            given.name(),
            extinction,
            albedo,
            *given.phase(),
            given.refractive_index(),
        )?;
        let layers = (0..self.medium.layers().len())
            .map(|index| {
                let (top, bottom) = self.medium.layer_bounds_cm(index);
                let layer = if index == self.layer {
                    replaced.clone()
                } else {
                    self.medium.layers()[index].clone()
                };
                (bottom - top, layer)
            })
            .collect();
        let smooth: Vec<usize> = (0..self.medium.layers().len())
            .filter(|&index| !self.medium.is_sharp_boundary(index))
            .collect();
        Ok(
            Medium::slab(layers, self.medium.ambient_above(), self.medium.source())?
                .with_ambient_below(self.medium.ambient_below())?
                .with_name(self.medium.name())
                .with_display_unit(self.medium.display_unit())
                .with_smooth_boundaries(smooth),
        )
    }
}
