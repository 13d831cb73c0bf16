#pragma once
/// Ready-made stages for a program's own datapath changes (and the reference plan): a node whose
/// words are golden values converted into its format (a ROM, a converter), and a requantiser
/// from one node's words into another's format (a DAC after the last transmit node).

#include <functional>
#include <memory>

#include "fxmimo/datapath/stage.hpp"

namespace fxmimo::datapath {

/// The golden values of a node in one trial, shaped like its words.
using golden_source = std::function<Eigen::MatrixXcd(const golden::trial_data&)>;

/// node = Q(value) for every value of source(trial): real and imaginary parts (real part only
/// for a real node) converted exactly, then requantised once by the node's mode. Its golden
/// view is source(trial) itself.
std::shared_ptr<stage> make_golden_converter(node_id node, golden_source source);

/// The golden values of a data-phase node (one with the symbol dimension) in one symbol block.
using block_source = std::function<Eigen::MatrixXcd(const golden::data_block&)>;

/// make_golden_converter for a data-phase node: node = Q(value) for every value of
/// source(block), block by block.
std::shared_ptr<stage> make_block_converter(node_id node, block_source source);

/// out[i] = Q_out(in[i]) at in's fraction bits. Its golden view is in's golden value; it stores
/// one output register (pair) per row of out (a stream).
std::shared_ptr<stage> make_requantizer(node_id out, node_id in);

}  // namespace fxmimo::datapath
