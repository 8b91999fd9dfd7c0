use plateau_core::Model;
