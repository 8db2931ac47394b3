//! Oxygen transport: oxygen content, delivery and consumption (Fick), and gas
//! exchange (alveolar gas, gradients, oxygenation indices, shunt, imputation
//! of PaO2 from SpO2).

pub mod content;
pub mod gas_exchange;
