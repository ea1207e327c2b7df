-- The underdraw reference player for LÖVE 11.
--
--   love integrations/love EXPORT_DIR [--camera X] [--screenshot OUT.png] [--plain]
--
-- With --screenshot it renders one frame at camera X (default 0) at the
-- draw list's viewport size, writes it to OUT.png and quits (exit 0; 1 with
-- the error on stderr). Without it a window shows the scene: the arrow keys
-- pan the camera (shift: faster), space toggles split / plain, the top line
-- shows the way drawn and the frame time.

local underdraw = require("underdraw")

local opts = { camera = 0, how = "split" }
local scene, canvas, target
local hud_font

local function usage(msg)
  error(msg .. "\nusage: love integrations/love EXPORT_DIR [--camera X] [--screenshot OUT.png] [--plain]", 0)
end

local function parse(args)
  local i = 1
  while args[i] do
    local a = args[i]
    if a == "--camera" then
      opts.camera = tonumber(args[i + 1]) or usage("--camera needs a number, got " .. tostring(args[i + 1]))
      i = i + 2
    elseif a == "--screenshot" then
      opts.screenshot = args[i + 1] or usage("--screenshot needs a PNG path")
      i = i + 2
    elseif a == "--plain" then
      opts.how = "plain"
      i = i + 1
    elseif a:sub(1, 2) == "--" then
      usage("unknown option " .. a)
    elseif opts.dir then
      usage("one export folder only, got " .. opts.dir .. " and " .. a)
    else
      opts.dir = a
      i = i + 1
    end
  end
  if not opts.dir then usage("give the export folder (`underdraw scene --export DIR`)") end
end

function love.load(args)
  -- a headless run must never wait on LÖVE's error screen
  if (function()
        for _, a in ipairs(args) do if a == "--screenshot" then return true end end
      end)() then
    love.errorhandler = function(msg)
      io.stderr:write("error: " .. tostring(msg) .. "\n")
      return function() return 1 end
    end
  end
  parse(args)
  scene = underdraw.load_scene(opts.dir)
  canvas, target = scene:new_target()
  if opts.screenshot then
    local calls = scene:render(canvas, target, opts.camera, opts.how)
    underdraw.write_png(canvas, opts.screenshot)
    print(string.format("wrote %s: %s, camera %s, %d draw calls, %d textures", opts.screenshot, opts.how,
      tostring(opts.camera), calls, scene.textures.count))
    love.event.quit(0)
    return
  end
  hud_font = love.graphics.newFont(14)
end

function love.keypressed(key)
  if key == "space" then
    opts.how = opts.how == "plain" and "split" or "plain"
  elseif key == "escape" then
    love.event.quit()
  end
end

function love.update(dt)
  if opts.screenshot then return end
  local speed = love.keyboard.isDown("lshift", "rshift") and 1200 or 300
  if love.keyboard.isDown("right") then opts.camera = opts.camera + speed * dt end
  if love.keyboard.isDown("left") then opts.camera = opts.camera - speed * dt end
end

function love.draw()
  if opts.screenshot then return end
  local t0 = love.timer.getTime()
  scene:render(canvas, target, opts.camera, opts.how)
  -- fit the frame into the window, keeping its aspect ratio
  local ww, wh = love.graphics.getDimensions()
  local s = math.min(ww / scene.viewport[1], wh / scene.viewport[2])
  love.graphics.setBlendMode("alpha", "alphamultiply")
  love.graphics.draw(canvas, 0, 0, 0, s, s)
  love.graphics.setFont(hud_font)
  love.graphics.setColor(0, 0, 0, 0.6)
  love.graphics.rectangle("fill", 0, 0, ww, 22)
  love.graphics.setColor(1, 1, 1, 1)
  love.graphics.print(string.format("%s   camera %.1f   frame %.2f ms (render call %.2f ms)   arrows pan, space split/plain",
    opts.how, opts.camera, 1000 * love.timer.getAverageDelta(), 1000 * (love.timer.getTime() - t0)), 6, 3)
end
