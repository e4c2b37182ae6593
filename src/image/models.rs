//! Named lists of emission models, read from TOML (the calibration's model list).
//!
//! The built-in list is `src/image/emission_models.toml`, which documents the format; a user
//! copies it, edits it, and passes the copy to `umbral calibrate --models PATH`.
//!
//! ```
//! use umbral::image::models::ModelList;
//!
//! let list = ModelList::built_in();
//! assert_eq!(list.models.len(), 8);
//! assert_eq!(list.models[0].name, "disk-isco");
//! let mine = ModelList::from_toml(
//!     "[[model]]\nname = \"flat\"\nkind = \"disk\"\ninner_edge = 4.5\n\
//!      profile = { kind = \"power-law\", index = 1.5 }\n",
//! )
//! .unwrap();
//! assert_eq!(mine.models[0].name, "flat");
//! ```

use super::emission::{DiskProfile, EmissionModel, InnerEdge};
use super::ImageError;
use serde::{Deserialize, Serialize};

/// The text of the built-in model list.
pub const BUILT_IN_LIST: &str = include_str!("emission_models.toml");

/// A model with its name.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NamedModel {
    /// The model's name (unique within its list).
    pub name: String,
    /// The model.
    pub model: EmissionModel,
}

/// A list of named emission models.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelList {
    /// The models, in file order.
    pub models: Vec<NamedModel>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileList {
    model: Vec<FileModel>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileModel {
    name: String,
    kind: Option<String>,
    inner_edge: Option<toml::Value>,
    profile: Option<DiskProfile>,
    outer_radius: Option<f64>,
    index: Option<f64>,
    spectral_index: Option<f64>,
}

impl ModelList {
    /// The built-in list (eight models: thin disks from the ISCO and from the horizon with
    /// power-law and log-normal profiles, and spherical infall with two emissivity indices).
    pub fn built_in() -> ModelList {
        ModelList::from_toml(BUILT_IN_LIST).expect("the built-in model list is valid")
    }

    /// Read a list; errors name the model and the problem on one line.
    pub fn from_toml(text: &str) -> Result<ModelList, ImageError> {
        let file: FileList = toml::from_str(text).map_err(|e| {
            ImageError::BadRequest(format!(
                "cannot read the model list: {}",
                e.message().replace('\n', " ")
            ))
        })?;
        if file.model.is_empty() {
            return Err(ImageError::BadRequest(
                "the model list has no [[model]] entry".into(),
            ));
        }
        let mut models: Vec<NamedModel> = Vec::new();
        for m in file.model {
            if models.iter().any(|n| n.name == m.name) {
                return Err(ImageError::BadRequest(format!(
                    "the model list names '{}' twice",
                    m.name
                )));
            }
            let model = m.model()?;
            model
                .validate()
                .map_err(|e| ImageError::BadRequest(format!("model '{}': {e}", m.name)))?;
            models.push(NamedModel {
                name: m.name,
                model,
            });
        }
        Ok(ModelList { models })
    }
}

impl FileModel {
    fn model(&self) -> Result<EmissionModel, ImageError> {
        let name = &self.name;
        let bad = |msg: String| Err(ImageError::BadRequest(format!("model '{name}': {msg}")));
        let spectral_index = self.spectral_index.unwrap_or(0.0);
        match self.kind.as_deref() {
            None => {
                let plain = self.inner_edge.is_none()
                    && self.profile.is_none()
                    && self.outer_radius.is_none()
                    && self.index.is_none()
                    && self.spectral_index.is_none();
                match EmissionModel::built_in(name) {
                    Some(m) if plain => Ok(m),
                    Some(_) => bad(
                        "a built-in model takes no other keys; give kind = \"disk\" \
                                    or \"infall\" to define one"
                            .into(),
                    ),
                    None => bad(format!(
                        "no kind given and not a built-in model ({})",
                        super::emission::BUILT_IN.join(", ")
                    )),
                }
            }
            Some("disk") => {
                if self.index.is_some() {
                    return bad("a disk takes its index inside profile, not as index".into());
                }
                let inner_edge = match &self.inner_edge {
                    None => {
                        return bad(
                            "a disk needs inner_edge (\"isco\", \"horizon\" or a radius)".into(),
                        )
                    }
                    Some(toml::Value::String(s)) if s == "isco" => InnerEdge::Isco,
                    Some(toml::Value::String(s)) if s == "horizon" => InnerEdge::Horizon,
                    Some(toml::Value::Float(r)) => InnerEdge::Radius(*r),
                    Some(toml::Value::Integer(r)) => InnerEdge::Radius(*r as f64),
                    Some(other) => {
                        return bad(format!(
                            "inner_edge must be \"isco\", \"horizon\" or a radius, got {other}"
                        ))
                    }
                };
                let Some(profile) = self.profile else {
                    return bad(
                        "a disk needs a profile, e.g. { kind = \"power-law\", index = 2.0 }".into(),
                    );
                };
                Ok(EmissionModel::ThinDisk {
                    profile,
                    inner_edge,
                    outer_radius: self.outer_radius,
                    spectral_index,
                })
            }
            Some("infall") => {
                if self.inner_edge.is_some()
                    || self.profile.is_some()
                    || self.outer_radius.is_some()
                {
                    return bad("infall takes only index and spectral_index".into());
                }
                Ok(EmissionModel::Infall {
                    index: self.index.unwrap_or(2.0),
                    spectral_index,
                })
            }
            Some(other) => bad(format!(
                "kind must be \"disk\" or \"infall\", got \"{other}\""
            )),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn errors_name_the_model_and_the_problem() {
        let cases = [
            ("[[model]]\nname = \"x\"\n", "not a built-in"),
            ("[[model]]\nname = \"x\"\nkind = \"jet\"\n", "kind must be"),
            ("[[model]]\nname = \"x\"\nkind = \"disk\"\nprofile = { kind = \"power-law\", index = 2.0 }\n", "needs inner_edge"),
            ("[[model]]\nname = \"disk-isco\"\n[[model]]\nname = \"disk-isco\"\n", "twice"),
            ("[[model]]\nname = \"x\"\nkind = \"disk\"\ninner_edge = -1.0\nprofile = { kind = \"power-law\", index = 2.0 }\n", "inner radius"),
            ("[[model]]\nname = \"x\"\ncolour = 3\n", "unknown field"),
        ];
        for (text, expected) in cases {
            let e = ModelList::from_toml(text).unwrap_err().to_string();
            assert!(e.contains(expected), "{text}: {e}");
            assert!(!e.contains('\n'), "{e}");
        }
    }
}
