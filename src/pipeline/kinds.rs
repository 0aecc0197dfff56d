//! Config tables that come in several kinds, told apart by their `kind` key.
//!
//! [`config_kinds!`] declares, from one list of `Variant = "name" => SettingsStruct`, the serde
//! enum the tables are read into (internally tagged by `kind`), a plain `…Kind` enum with each
//! kind's name and accepted keys (read from the settings struct's own derive, see
//! `field_names.rs`), and `kind()` on the enum. Adding a kind is one line of that list; every
//! `match` over the enums is exhaustive, so the compiler points to each place that must learn
//! about it.

/// See the module documentation.
macro_rules! config_kinds {
    (
        $(#[$meta:meta])*
        pub enum $enum:ident / $kind:ident {
            $( $(#[$vmeta:meta])* $variant:ident = $name:literal => $spec:ty, )+
        }
    ) => {
        $(#[$meta])*
        #[derive(Debug, Clone, serde::Deserialize)]
        #[serde(tag = "kind")]
        // one value per config table, read once: the size of the largest kind does not matter
        #[allow(clippy::large_enum_variant)]
        pub enum $enum {
            $( $(#[$vmeta])* #[serde(rename = $name)] $variant($spec), )+
        }

        #[doc = concat!("The kind of a [`", stringify!($enum), "`], without its settings.")]
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum $kind {
            $( $variant, )+
        }

        impl $kind {
            /// Every kind, in the order they are declared.
            pub const ALL: &'static [$kind] = &[ $( $kind::$variant, )+ ];

            /// The kind's name as written after `kind =` in a config.
            pub fn name(self) -> &'static str {
                match self {
                    $( $kind::$variant => $name, )+
                }
            }

            /// The kind called `name`, if there is one.
            pub fn from_name(name: &str) -> Option<$kind> {
                Self::ALL.iter().copied().find(|k| k.name() == name)
            }

            /// Names of every kind, in declaration order.
            pub fn names() -> Vec<&'static str> {
                Self::ALL.iter().map(|k| k.name()).collect()
            }

            /// Keys a table of this kind accepts: `kind`, then its settings' fields.
            pub fn keys(self) -> Vec<&'static str> {
                let fields = match self {
                    $( $kind::$variant => $crate::pipeline::field_names::field_names::<$spec>(), )+
                };
                std::iter::once("kind").chain(fields.iter().copied()).collect()
            }
        }

        impl $enum {
            /// Which kind this is.
            pub fn kind(&self) -> $kind {
                match self {
                    $( $enum::$variant(_) => $kind::$variant, )+
                }
            }
        }
    };
}

pub(crate) use config_kinds;
