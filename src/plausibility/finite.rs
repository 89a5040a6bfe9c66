//! A serde serializer that writes nothing and records the path of every
//! non-finite `f32`/`f64` it is handed, so that any result type that can be
//! printed can also be scanned, field by field, with no list of fields to
//! keep in step with it.

use serde::ser::{self, Serialize};

/// Collects the paths of non-finite numbers.
#[derive(Debug, Default)]
pub(super) struct Scanner {
    path: Vec<String>,
    pub(super) found: Vec<String>,
}

/// Never produced (scanning cannot fail); serde requires the type.
#[derive(Debug)]
pub(super) struct Never;

impl std::fmt::Display for Never {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("unreachable")
    }
}

impl std::error::Error for Never {}

impl ser::Error for Never {
    fn custom<T: std::fmt::Display>(_: T) -> Self {
        Never
    }
}

impl Scanner {
    fn number(&mut self, v: f64) {
        if !v.is_finite() {
            let mut p = String::new();
            for part in &self.path {
                if !part.starts_with('[') && !p.is_empty() {
                    p.push('.');
                }
                p.push_str(part);
            }
            self.found.push(p);
        }
    }

    fn nested<T: Serialize + ?Sized>(&mut self, part: String, value: &T) -> Result<(), Never> {
        self.path.push(part);
        let r = value.serialize(&mut *self);
        self.path.pop();
        r
    }
}

/// Methods that ignore a value of a type that is never a number.
macro_rules! ignore {
    ($($name:ident: $ty:ty),* $(,)?) => {
        $(fn $name(self, _v: $ty) -> Result<(), Never> { Ok(()) })*
    };
}

impl<'a> ser::Serializer for &'a mut Scanner {
    type Ok = ();
    type Error = Never;
    type SerializeSeq = Seq<'a>;
    type SerializeTuple = Seq<'a>;
    type SerializeTupleStruct = Seq<'a>;
    type SerializeTupleVariant = Seq<'a>;
    type SerializeMap = Seq<'a>;
    type SerializeStruct = &'a mut Scanner;
    type SerializeStructVariant = &'a mut Scanner;

    ignore!(
        serialize_bool: bool, serialize_i8: i8, serialize_i16: i16, serialize_i32: i32,
        serialize_i64: i64, serialize_u8: u8, serialize_u16: u16, serialize_u32: u32,
        serialize_u64: u64, serialize_char: char, serialize_str: &str, serialize_bytes: &[u8],
    );

    fn serialize_f32(self, v: f32) -> Result<(), Never> {
        self.number(f64::from(v));
        Ok(())
    }
    fn serialize_f64(self, v: f64) -> Result<(), Never> {
        self.number(v);
        Ok(())
    }
    fn serialize_none(self) -> Result<(), Never> {
        Ok(())
    }
    fn serialize_some<T: Serialize + ?Sized>(self, value: &T) -> Result<(), Never> {
        value.serialize(self)
    }
    fn serialize_unit(self) -> Result<(), Never> {
        Ok(())
    }
    fn serialize_unit_struct(self, _: &'static str) -> Result<(), Never> {
        Ok(())
    }
    fn serialize_unit_variant(self, _: &'static str, _: u32, _: &'static str) -> Result<(), Never> {
        Ok(())
    }
    fn serialize_newtype_struct<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        value.serialize(self)
    }
    fn serialize_newtype_variant<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        self.nested(variant.to_string(), value)
    }
    fn serialize_seq(self, _: Option<usize>) -> Result<Seq<'a>, Never> {
        Ok(Seq { s: self, i: 0 })
    }
    fn serialize_tuple(self, _: usize) -> Result<Seq<'a>, Never> {
        Ok(Seq { s: self, i: 0 })
    }
    fn serialize_tuple_struct(self, _: &'static str, _: usize) -> Result<Seq<'a>, Never> {
        Ok(Seq { s: self, i: 0 })
    }
    fn serialize_tuple_variant(
        self,
        _: &'static str,
        _: u32,
        _: &'static str,
        _: usize,
    ) -> Result<Seq<'a>, Never> {
        Ok(Seq { s: self, i: 0 })
    }
    fn serialize_map(self, _: Option<usize>) -> Result<Seq<'a>, Never> {
        Ok(Seq { s: self, i: 0 })
    }
    fn serialize_struct(self, _: &'static str, _: usize) -> Result<Self, Never> {
        Ok(self)
    }
    fn serialize_struct_variant(
        self,
        _: &'static str,
        _: u32,
        _: &'static str,
        _: usize,
    ) -> Result<Self, Never> {
        Ok(self)
    }
}

/// A sequence, tuple or map being scanned: elements are numbered in order
/// (map keys are skipped, their values numbered like elements).
pub(super) struct Seq<'a> {
    s: &'a mut Scanner,
    i: usize,
}

impl Seq<'_> {
    fn element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        let part = format!("[{}]", self.i);
        self.i += 1;
        self.s.nested(part, value)
    }
}

macro_rules! sequence {
    ($($tr:ident :: $m:ident),*) => {
        $(impl ser::$tr for Seq<'_> {
            type Ok = ();
            type Error = Never;
            fn $m<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
                self.element(value)
            }
            fn end(self) -> Result<(), Never> {
                Ok(())
            }
        })*
    };
}

sequence!(
    SerializeSeq::serialize_element,
    SerializeTuple::serialize_element,
    SerializeTupleStruct::serialize_field,
    SerializeTupleVariant::serialize_field
);

impl ser::SerializeMap for Seq<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, _key: &T) -> Result<(), Never> {
        Ok(())
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        self.element(value)
    }
    fn end(self) -> Result<(), Never> {
        Ok(())
    }
}

macro_rules! fields {
    ($($tr:ident),*) => {
        $(impl ser::$tr for &mut Scanner {
            type Ok = ();
            type Error = Never;
            fn serialize_field<T: Serialize + ?Sized>(
                &mut self,
                key: &'static str,
                value: &T,
            ) -> Result<(), Never> {
                self.nested(key.to_string(), value)
            }
            fn end(self) -> Result<(), Never> {
                Ok(())
            }
        })*
    };
}

fields!(SerializeStruct, SerializeStructVariant);
