-- LÖVE settings for the underdraw reference player (main.lua).
function love.conf(t)
  t.identity = "underdraw-player"
  t.version = "11.4"
  t.window.title = "underdraw: split vs plain"
  t.window.width = 960
  t.window.height = 540
  t.window.resizable = true
  t.window.vsync = 0
  t.window.msaa = 0
  t.gammacorrect = false -- colours are blended as stored, like the scorer assumes
  -- no sound, no joysticks: the player only draws
  t.modules.audio = false
  t.modules.sound = false
  t.modules.joystick = false
  t.modules.physics = false
  t.modules.video = false
end
