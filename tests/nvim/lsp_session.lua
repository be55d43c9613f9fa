-- A real editor driving `ohmsheet lsp`: Neovim, headless, with no user
-- configuration (`nvim --headless -u NONE -i NONE -n -c "luafile THIS"`).
-- It opens the sheet named by OHMSHEET_NVIM_SHEET, starts the server
-- (OHMSHEET_BIN) through Neovim's own LSP client, waits for diagnostics,
-- makes a mistake in one line and waits for its diagnostic, mends it, then
-- asks for inlay hints, completion, signature help, hover and definition,
-- and writes all it received as JSON to OHMSHEET_NVIM_OUT. The Rust test
-- (tests/lsp_nvim.rs) asserts on that file. Uses the API of Neovim 0.7
-- and later (vim.lsp.start_client, buf_attach_client, buf_request_sync).

local out_path = os.getenv("OHMSHEET_NVIM_OUT")
local sheet = os.getenv("OHMSHEET_NVIM_SHEET")
local bin = os.getenv("OHMSHEET_BIN")
local WAIT = 60000

local got = { steps = {}, diagnostics = {} }

local function finish(code)
  local f = io.open(out_path, "w")
  f:write(vim.fn.json_encode(got))
  f:close()
  vim.cmd((code == 0) and "qall!" or "cquit " .. code)
end

local function step(name)
  table.insert(got.steps, name)
end

local ok, err = pcall(function()
  vim.cmd("edit " .. vim.fn.fnameescape(sheet))
  local buf = vim.api.nvim_get_current_buf()
  local published = {}
  local client_id = vim.lsp.start_client({
    name = "ohmsheet",
    cmd = { bin, "lsp" },
    root_dir = vim.fn.fnamemodify(sheet, ":h"),
    init_options = { complex = "rect", digits = 4 },
    handlers = {
      ["textDocument/publishDiagnostics"] = function(_, result, _, _)
        table.insert(published, result)
      end,
    },
  })
  assert(client_id, "the client started")
  vim.lsp.buf_attach_client(buf, client_id)
  local client = vim.lsp.get_client_by_id(client_id)
  assert(vim.wait(WAIT, function() return #published >= 1 end, 20), "diagnostics on open")
  step("opened")
  got.capabilities = client.server_capabilities or client.resolved_capabilities
  got.diagnostics.on_open = published[#published].diagnostics

  local function lnum(prefix)
    local lines = vim.api.nvim_buf_get_lines(buf, 0, -1, false)
    for i, l in ipairs(lines) do
      if l:sub(1, #prefix) == prefix then return i - 1, l end
    end
    error("no line starting with " .. prefix)
  end

  -- A mistake, typed as an editor types it, and mended.
  local zl, zsrc = lnum("Zsrc ")
  local before = #published
  vim.api.nvim_buf_set_lines(buf, zl, zl + 1, false, { (zsrc:gsub("Zc ", "Zcc ", 1)) })
  assert(vim.wait(WAIT, function()
    return #published > before and #published[#published].diagnostics > 0
  end, 20), "a diagnostic for the mistake")
  got.diagnostics.mistake = published[#published].diagnostics
  step("mistake")
  before = #published
  vim.api.nvim_buf_set_lines(buf, zl, zl + 1, false, { zsrc })
  assert(vim.wait(WAIT, function()
    return #published > before and published[#published].diagnostics[1] == nil
  end, 20), "the diagnostic goes when mended")
  step("mended")

  local uri = vim.uri_from_bufnr(buf)
  local function ask(method, params)
    local answers = vim.lsp.buf_request_sync(buf, method, params, WAIT)
    local a = answers and answers[client_id]
    if not a then return { error = "no answer" } end
    return { result = a.result, error = a.err or a.error }
  end

  local nlines = vim.api.nvim_buf_line_count(buf)
  got.inlay_hints = ask("textDocument/inlayHint", {
    textDocument = { uri = uri },
    range = { start = { line = 0, character = 0 }, ["end"] = { line = nlines, character = 0 } },
  })
  step("hints")

  -- In `Ifault = abs(Vth / Zth) [kA]`: just after the `Z` of `Zth`, and
  -- on `Zth` itself.
  local il, ifault = lnum("Ifault ")
  local zcol = ifault:find("Zth", 1, true) - 1
  local at_z = { textDocument = { uri = uri }, position = { line = il, character = zcol + 1 } }
  got.completion = ask("textDocument/completion", at_z)
  step("completion")
  got.signature = ask("textDocument/signatureHelp", at_z)
  step("signature")
  got.hover = ask("textDocument/hover", at_z)
  step("hover")
  got.definition = ask("textDocument/definition", at_z)
  step("definition")
  got.lines = { ifault = il, zsrc = zl, zth = (lnum("Zth ")) }

  vim.lsp.stop_client(client_id)
  vim.wait(5000, function() return vim.lsp.get_client_by_id(client_id) == nil end, 20)
  step("stopped")
end)

if not ok then
  got.failure = tostring(err)
  finish(3)
else
  finish(0)
end
