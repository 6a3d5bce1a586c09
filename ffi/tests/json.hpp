// A tiny JSON reader for the tests: a DOM of null/bool/number/string/array/object values.
// Numbers are parsed with strtod (correctly rounded), so shortest round-trip decimal text
// written by Rust gives back the exact double. Each value keeps the source text it came
// from (`raw`), so a model description can be passed verbatim to tl_model_from_json.
#ifndef TIELINE_TEST_JSON_HPP
#define TIELINE_TEST_JSON_HPP

#include <cmath>
#include <cstdlib>
#include <fstream>
#include <map>
#include <memory>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

namespace json {

struct Value {
    enum Type { Null, Bool, Number, String, Array, Object } type = Null;
    bool b = false;
    double num = 0;
    std::string str;
    std::vector<Value> arr;
    std::vector<std::pair<std::string, Value>> obj;
    std::string raw;

    bool has(const std::string& k) const {
        for (auto& kv : obj)
            if (kv.first == k) return true;
        return false;
    }
    const Value& operator[](const std::string& k) const {
        for (auto& kv : obj)
            if (kv.first == k) return kv.second;
        throw std::runtime_error("json: missing key '" + k + "'");
    }
    const Value& operator[](size_t i) const {
        if (type != Array || i >= arr.size()) throw std::runtime_error("json: index out of range");
        return arr[i];
    }
    size_t size() const { return type == Array ? arr.size() : obj.size(); }
    // A number; null reads as NaN (serde_json writes NaN and infinities as null).
    double number() const {
        if (type == Null) return NAN;
        if (type != Number) throw std::runtime_error("json: not a number: " + raw);
        return num;
    }
    std::vector<double> numbers() const {
        std::vector<double> v;
        for (auto& x : arr) v.push_back(x.number());
        return v;
    }
};

class Parser {
public:
    explicit Parser(const std::string& s) : s_(s) {}
    Value parse() {
        Value v = value();
        ws();
        if (i_ != s_.size()) fail("trailing text");
        return v;
    }

private:
    [[noreturn]] void fail(const char* what) {
        throw std::runtime_error(std::string("json: ") + what + " at offset " + std::to_string(i_));
    }
    void ws() {
        while (i_ < s_.size() && (s_[i_] == ' ' || s_[i_] == '\n' || s_[i_] == '\t' || s_[i_] == '\r')) ++i_;
    }
    bool lit(const char* w) {
        size_t n = std::char_traits<char>::length(w);
        if (s_.compare(i_, n, w) == 0) {
            i_ += n;
            return true;
        }
        return false;
    }
    std::string string() {
        if (s_[i_] != '"') fail("expected a string");
        ++i_;
        std::string out;
        while (i_ < s_.size() && s_[i_] != '"') {
            char c = s_[i_++];
            if (c == '\\') {
                if (i_ >= s_.size()) fail("bad escape");
                char e = s_[i_++];
                switch (e) {
                case 'n': out += '\n'; break;
                case 't': out += '\t'; break;
                case 'r': out += '\r'; break;
                case 'b': out += '\b'; break;
                case 'f': out += '\f'; break;
                case 'u': {
                    if (i_ + 4 > s_.size()) fail("bad \\u escape");
                    unsigned cp = std::stoul(s_.substr(i_, 4), nullptr, 16);
                    i_ += 4;
                    if (cp >= 0xD800 && cp < 0xDC00 && s_.compare(i_, 2, "\\u") == 0) {
                        unsigned lo = std::stoul(s_.substr(i_ + 2, 4), nullptr, 16);
                        i_ += 6;
                        cp = 0x10000 + ((cp - 0xD800) << 10) + (lo - 0xDC00);
                    }
                    if (cp < 0x80) out += char(cp);
                    else if (cp < 0x800) { out += char(0xC0 | (cp >> 6)); out += char(0x80 | (cp & 0x3F)); }
                    else if (cp < 0x10000) {
                        out += char(0xE0 | (cp >> 12)); out += char(0x80 | ((cp >> 6) & 0x3F));
                        out += char(0x80 | (cp & 0x3F));
                    } else {
                        out += char(0xF0 | (cp >> 18)); out += char(0x80 | ((cp >> 12) & 0x3F));
                        out += char(0x80 | ((cp >> 6) & 0x3F)); out += char(0x80 | (cp & 0x3F));
                    }
                    break;
                }
                default: out += e;
                }
            } else {
                out += c;
            }
        }
        if (i_ >= s_.size()) fail("unterminated string");
        ++i_;
        return out;
    }
    Value value() {
        ws();
        if (i_ >= s_.size()) fail("unexpected end");
        size_t start = i_;
        Value v;
        char c = s_[i_];
        if (c == '{') {
            v.type = Value::Object;
            ++i_;
            ws();
            if (s_[i_] == '}') ++i_;
            else
                for (;;) {
                    ws();
                    std::string k = string();
                    ws();
                    if (s_[i_++] != ':') fail("expected ':'");
                    v.obj.emplace_back(k, value());
                    ws();
                    if (s_[i_] == ',') { ++i_; continue; }
                    if (s_[i_] == '}') { ++i_; break; }
                    fail("expected ',' or '}'");
                }
        } else if (c == '[') {
            v.type = Value::Array;
            ++i_;
            ws();
            if (s_[i_] == ']') ++i_;
            else
                for (;;) {
                    v.arr.push_back(value());
                    ws();
                    if (s_[i_] == ',') { ++i_; continue; }
                    if (s_[i_] == ']') { ++i_; break; }
                    fail("expected ',' or ']'");
                }
        } else if (c == '"') {
            v.type = Value::String;
            v.str = string();
        } else if (lit("true")) {
            v.type = Value::Bool;
            v.b = true;
        } else if (lit("false")) {
            v.type = Value::Bool;
        } else if (lit("null")) {
            v.type = Value::Null;
        } else {
            const char* b = s_.c_str() + i_;
            char* e = nullptr;
            v.num = std::strtod(b, &e);
            if (e == b) fail("bad value");
            v.type = Value::Number;
            i_ += size_t(e - b);
        }
        v.raw = s_.substr(start, i_ - start);
        return v;
    }
    const std::string& s_;
    size_t i_ = 0;
};

inline Value parse(const std::string& text) { return Parser(text).parse(); }

inline Value parse_file(const std::string& path) {
    std::ifstream f(path);
    if (!f) throw std::runtime_error("cannot open " + path);
    std::stringstream ss;
    ss << f.rdbuf();
    return parse(ss.str());
}

} // namespace json

#endif
